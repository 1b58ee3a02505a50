//! The pilot report to attach to a protocol: a per-participant table, the
//! decomposition per arm, the assumptions and cautions (Markdown), and a chart of
//! achieved against delivered energy per participant with the identity line (a
//! standalone SVG: no scripts or external fonts, fixed decimals, so the same input
//! gives the same bytes). Pure: text in, text out.

use super::arm::{PilotAnalysis, TermSummary};
use super::{Estimate, Term, precision};
use crate::safety::CAUTIONS;
use std::fmt::Write as _;

/// The participants' distinct screening results, in order of first appearance,
/// each with the codes that have it (a result whose clearance is needed but not on
/// file says so).
pub fn screening_groups(a: &PilotAnalysis) -> Vec<(String, Vec<String>)> {
    let mut out: Vec<(String, Vec<String>)> = Vec::new();
    for p in &a.participants {
        let mut r = p.screening.recommendation.clone();
        if p.screening.clearance_missing {
            r.push_str(" (medical clearance not on file)");
        }
        match out.iter_mut().find(|(k, _)| *k == r) {
            Some((_, codes)) => codes.push(p.code.clone()),
            None => out.push((r, vec![p.code.clone()])),
        }
    }
    out
}

/// One line per distinct screening result: how many participants, which, and the
/// result (at most 12 codes named).
fn screening_lines(a: &PilotAnalysis) -> Vec<String> {
    screening_groups(a)
        .into_iter()
        .map(|(r, codes)| {
            format!(
                "{} participant(s) ({}): {r}",
                codes.len(),
                codes_text(&codes)
            )
        })
        .collect()
}

/// Participant codes, at most 12 named.
fn codes_text(codes: &[String]) -> String {
    let shown: Vec<&str> = codes.iter().take(12).map(String::as_str).collect();
    let more = if codes.len() > 12 {
        format!(" and {} more", codes.len() - 12)
    } else {
        String::new()
    };
    format!("{}{more}", shown.join(", "))
}

/// The participants' screening results (ACSM 2015 pre-participation algorithm,
/// from each plan's answers) and the standing cautions, as plain text: standard
/// error beside the JSON.
pub fn side_notes(a: &PilotAnalysis) -> String {
    let mut out = String::from("Screening (ACSM 2015 pre-participation algorithm)\n");
    for l in screening_lines(a) {
        let _ = writeln!(out, "  - {l}");
    }
    out.push_str("\nCautions\n");
    for c in CAUTIONS {
        let _ = writeln!(out, "  - {c}");
    }
    out
}

fn f(x: f64, d: usize) -> String {
    format!("{x:.d$}")
}

fn est(e: &Option<Estimate>, d: usize) -> String {
    e.map_or_else(
        || "--".to_string(),
        |e| format!("{} ({} to {})", f(e.value, d), f(e.lo, d), f(e.hi, d)),
    )
}

fn decimals(t: Term) -> usize {
    match t {
        Term::Share | Term::IntakeFraction | Term::ActivityFraction => 2,
        Term::RmrAdaptationPerKg => 1,
        _ => 0,
    }
}

fn term_row(s: &TermSummary) -> String {
    let d = decimals(s.term);
    let pair = |p: Option<(f64, f64)>| {
        p.map_or_else(
            || "--".to_string(),
            |(a, b)| format!("{} to {}", f(a, d), f(b, d)),
        )
    };
    format!(
        "| {} | {} | {} | {} | {} | {} | {} | {} |",
        s.term.label(),
        s.n,
        f(s.mean, d),
        pair(s.mean_interval),
        s.between_sd.map_or("--".to_string(), |x| f(x, d)),
        pair(s.between_sd_interval),
        s.vs_control.map_or("--".to_string(), |(m, a, b)| format!(
            "{} ({} to {})",
            f(m, d),
            f(a, d),
            f(b, d)
        )),
        s.note.clone().unwrap_or_default()
    )
}

/// The report as Markdown.
pub fn markdown(a: &PilotAnalysis, pilot: &str) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "# Pilot analysis: {pilot}\n");
    let _ = writeln!(
        o,
        "Each participant from the baseline visit to the last body-composition visit. Energies are averages in kcal/day; intervals are 95 %, from the measurements' precision (per participant) or across participants (per arm).\n"
    );
    let _ = writeln!(o, "## Participants\n");
    let _ = writeln!(
        o,
        "| participant | arm | from | to | delivered | achieved | share | gap | intake change | RMR adaptation | intake | resting | rest |"
    );
    let _ = writeln!(o, "|---|---|---|---|---|---|---|---|---|---|---|---|---|");
    for p in &a.participants {
        let d = &p.decomposition;
        let _ = writeln!(
            o,
            "| {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} |",
            p.code,
            p.arm,
            p.from,
            p.to,
            f(p.delivered, 0),
            est(&Some(p.achieved), 0),
            est(&p.share, 2),
            est(&Some(p.gap), 0),
            est(&p.intake_change, 0),
            est(&p.rmr_adaptation, 0),
            est(&d.intake, 0),
            est(&d.resting, 0),
            est(&Some(d.rest), 0),
        );
    }
    if !a.between_visits.is_empty() {
        let _ = writeln!(o, "\n## Between consecutive visits\n");
        let _ = writeln!(
            o,
            "| participant | from | to | delivered | achieved | share | gap | intake change |"
        );
        let _ = writeln!(o, "|---|---|---|---|---|---|---|---|");
        for p in &a.between_visits {
            let _ = writeln!(
                o,
                "| {} | {} | {} | {} | {} | {} | {} | {} |",
                p.code,
                p.from,
                p.to,
                f(p.delivered, 0),
                est(&Some(p.achieved), 0),
                est(&p.share, 2),
                est(&Some(p.gap), 0),
                est(&p.intake_change, 0),
            );
        }
    }
    let _ = writeln!(o, "\n## Per arm\n");
    for arm in &a.arms {
        let _ = writeln!(
            o,
            "### {}{} ({} participants)\n",
            arm.arm,
            if arm.control { " (control)" } else { "" },
            arm.n
        );
        let _ = writeln!(
            o,
            "| term | n | mean | 95 % interval | between-participant SD | its 95 % interval | difference from control | note |"
        );
        let _ = writeln!(o, "|---|---|---|---|---|---|---|---|");
        for s in &arm.terms {
            let _ = writeln!(o, "{}", term_row(s));
        }
        let _ = writeln!(o);
    }
    let _ = writeln!(o, "## What the data can and cannot separate\n");
    let mut seen: Vec<&str> = Vec::new();
    for p in &a.participants {
        let s = p.decomposition.cannot_separate.as_str();
        if !seen.contains(&s) {
            seen.push(s);
            let n = a
                .participants
                .iter()
                .filter(|q| q.decomposition.cannot_separate == s)
                .count();
            let _ = writeln!(o, "- ({n} participant(s)) {s}");
        }
    }
    assumptions(&mut o, a);
    if !a.warnings.is_empty() {
        let _ = writeln!(o, "\n## Warnings\n");
        for w in &a.warnings {
            let _ = writeln!(o, "- {}", w.message);
        }
    }
    screening_and_cautions(&mut o, a);
    o
}

/// The assumptions, the model constants used and the precision defaults.
fn assumptions(o: &mut String, a: &PilotAnalysis) {
    let _ = writeln!(o, "\n## Assumptions\n");
    for line in [
        "The participant is taken as weight-stable at baseline: baseline intake equals the baseline TEE (or the stated intake).",
        "The stores' energy uses the energy densities of fat and fat-free mass of each participant's plan (`[model]`); the intake term deducts the extra food's own thermic effect at the plan's TEF fraction; the RMR equation is the plan's.",
        "The resting and mass terms average the visits by the trapezoid rule: between visits the change is taken as linear.",
        "Delivered energy counts the recorded sessions by the dose rule, net of the participant's rest, and is taken as exact; unrecorded movement is in the rest.",
        "Measurement errors of fat and fat-free mass are taken as independent (by DXA they are negatively correlated, so the stated uncertainty of the stores is, if anything, too wide).",
        "The between-participant SD removes the mean measurement variance from the observed variance (method of moments; DerSimonian and Laird 1986, Control Clin Trials 7:177), and its interval assumes normal terms; a small pilot gives a wide interval.",
        "A ratio (share, fractions, per kg) is unstable when its denominator is small: little delivered energy, or little mass lost.",
    ] {
        let _ = writeln!(o, "- {line}");
    }
    let _ = writeln!(
        o,
        "\nModel constants used (from the participants' plans):\n"
    );
    for (c, codes) in constant_groups(a) {
        let _ = writeln!(
            o,
            "- {}: fat {} kcal/kg, fat-free {} kcal/kg, thermic effect of food {}, RMR equation {}",
            codes_text(&codes),
            f(c.fat_kcal_per_kg, 0),
            f(c.lean_kcal_per_kg, 0),
            f(c.tef_fraction, 3),
            c.rmr_equation.name()
        );
    }
    let _ = writeln!(o, "\nPrecision defaults used where a row gives none:\n");
    for d in precision::ALL {
        let _ = writeln!(
            o,
            "- {}: CV {} % ({})",
            d.what,
            f(d.cv * 100.0, 1),
            d.source
        );
    }
}

/// The participants' screening results and the standing cautions.
fn screening_and_cautions(o: &mut String, a: &PilotAnalysis) {
    let _ = writeln!(o, "\n## Screening and cautions\n");
    let _ = writeln!(
        o,
        "Screening result (ACSM 2015 pre-participation algorithm, from each participant's plan):\n"
    );
    for l in screening_lines(a) {
        let _ = writeln!(o, "- {l}");
    }
    let _ = writeln!(o, "\nCautions:\n");
    for c in CAUTIONS {
        let _ = writeln!(o, "- {c}");
    }
}

/// The distinct model constants the participants were analysed with, each with the
/// codes that used them.
fn constant_groups(a: &PilotAnalysis) -> Vec<(crate::model::Constants, Vec<String>)> {
    let mut out: Vec<(crate::model::Constants, Vec<String>)> = Vec::new();
    for p in &a.participants {
        match out.iter_mut().find(|(c, _)| *c == p.constants) {
            Some((_, codes)) => codes.push(p.code.clone()),
            None => out.push((p.constants, vec![p.code.clone()])),
        }
    }
    out
}

/// XML-escape text.
fn escape(t: &str) -> String {
    t.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Okabe-Ito colours (Okabe M, Ito K 2008, Color Universal Design), one per arm,
/// with a different marker shape too.
const COLOURS: [&str; 6] = [
    "#0072b2", "#d55e00", "#009e73", "#cc79a7", "#e69f00", "#56b4e9",
];

/// Words wrapped into lines of at most `width` characters.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// The chart's caption: the participants' screening results and the standing
/// cautions, wrapped to the chart's width.
fn caption_lines(a: &PilotAnalysis) -> Vec<String> {
    let mut parts = vec![format!(
        "Screening (ACSM 2015): {}.",
        screening_lines(a).join("; ")
    )];
    parts.extend(CAUTIONS.iter().map(|c| c.to_string()));
    parts.iter().flat_map(|p| wrap(p, 140)).collect()
}

/// Achieved against delivered energy per participant (kcal/day), each with its
/// 95 % interval as a vertical bar, coloured and shaped by arm, with the identity
/// line (everything delivered reaches the stores); below it the participants'
/// screening results and the standing cautions.
pub fn chart_svg(a: &PilotAnalysis, pilot: &str) -> String {
    let caption = caption_lines(a);
    let (left, right, top) = (80.0, 320.0, 60.0);
    let (pw, ph) = (480.0, 430.0);
    let w = left + pw + right;
    let label_y = top + ph + 48.0;
    let h = label_y + 26.0 + 15.0 * caption.len() as f64;
    let mut lo = 0.0f64;
    let mut hi = 1.0f64;
    for p in &a.participants {
        lo = lo.min(p.achieved.lo).min(p.delivered);
        hi = hi.max(p.achieved.hi).max(p.delivered);
    }
    let pad = 0.05 * (hi - lo);
    let (lo, hi) = (lo - pad, hi + pad);
    let x = |v: f64| left + (v - lo) / (hi - lo) * pw;
    let y = |v: f64| top + ph - (v - lo) / (hi - lo) * ph;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" font-family=\"DejaVu Sans, Arial, sans-serif\">"
    );
    let _ = writeln!(s, "<rect width=\"{w}\" height=\"{h}\" fill=\"#ffffff\"/>");
    let _ = writeln!(
        s,
        "<text x=\"{}\" y=\"28\" font-size=\"17\">{}</text>",
        left,
        escape(&format!("Achieved against delivered energy: {pilot}"))
    );
    // Axes and ticks.
    grid_lines(&mut s, lo, hi, x, y, (left, top, pw, ph));
    let _ = writeln!(
        s,
        "<rect x=\"{left:.1}\" y=\"{top:.1}\" width=\"{pw:.1}\" height=\"{ph:.1}\" fill=\"none\" stroke=\"#222222\"/>"
    );
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{label_y:.1}\" font-size=\"14\" text-anchor=\"middle\">delivered net exercise energy, kcal/day</text>",
        left + pw / 2.0,
    );
    for (k, line) in caption.iter().enumerate() {
        let _ = writeln!(
            s,
            "<text x=\"20\" y=\"{:.1}\" font-size=\"11\">{}</text>",
            label_y + 28.0 + 15.0 * k as f64,
            escape(line)
        );
    }
    let _ = writeln!(
        s,
        "<text transform=\"translate(22 {:.1}) rotate(-90)\" font-size=\"14\" text-anchor=\"middle\">achieved deficit (energy stores), kcal/day</text>",
        top + ph / 2.0
    );
    // Identity line.
    let _ = writeln!(
        s,
        "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#222222\" stroke-dasharray=\"7 4\"/>",
        x(lo),
        y(lo),
        x(hi),
        y(hi)
    );
    for (k, arm) in a.arms.iter().enumerate() {
        let colour = COLOURS[k % COLOURS.len()];
        for p in a.participants.iter().filter(|p| p.arm == arm.arm) {
            let (cx, cy) = (x(p.delivered), y(p.achieved.value));
            let _ = writeln!(
                s,
                "<line x1=\"{cx:.1}\" y1=\"{:.1}\" x2=\"{cx:.1}\" y2=\"{:.1}\" stroke=\"{colour}\"/>",
                y(p.achieved.lo),
                y(p.achieved.hi)
            );
            let _ = writeln!(s, "{}", marker(k, cx, cy, colour, &p.code));
        }
        let ly = top + 20.0 + 22.0 * k as f64;
        let _ = writeln!(
            s,
            "{}",
            marker(k, left + pw + 20.0, ly - 4.0, colour, &arm.arm)
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{ly:.1}\" font-size=\"13\">{}</text>",
            left + pw + 32.0,
            escape(&arm.arm)
        );
    }
    let ly = top + 20.0 + 22.0 * a.arms.len() as f64;
    let _ = writeln!(
        s,
        "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#222222\" stroke-dasharray=\"7 4\"/>",
        left + pw + 12.0,
        ly - 4.0,
        left + pw + 28.0,
        ly - 4.0
    );
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{ly:.1}\" font-size=\"13\">all delivered reaches the stores</text>",
        left + pw + 32.0
    );
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"13\">bars: 95 % from measurement precision</text>",
        left + pw + 12.0,
        ly + 22.0
    );
    s.push_str("</svg>\n");
    s
}

/// The grid lines and tick labels of both axes, from `lo` to `hi` (the same scale on
/// both), in the plot area `(left, top, width, height)`.
fn grid_lines(
    s: &mut String,
    lo: f64,
    hi: f64,
    x: impl Fn(f64) -> f64,
    y: impl Fn(f64) -> f64,
    (left, top, pw, ph): (f64, f64, f64, f64),
) {
    let step = nice_step((hi - lo) / 6.0);
    let mut t = (lo / step).ceil() * step;
    while t <= hi {
        // No "-0" label.
        let t0 = if t.abs() < 1e-9 * step { 0.0 } else { t };
        let _ = writeln!(
            s,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#e3e3e3\"/>",
            x(t),
            top,
            x(t),
            top + ph
        );
        let _ = writeln!(
            s,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#e3e3e3\"/>",
            left,
            y(t),
            left + pw,
            y(t)
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" text-anchor=\"middle\">{}</text>",
            x(t),
            top + ph + 18.0,
            f(t0, 0)
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" text-anchor=\"end\">{}</text>",
            left - 6.0,
            y(t) + 4.0,
            f(t0, 0)
        );
        t += step;
    }
}

fn marker(k: usize, cx: f64, cy: f64, colour: &str, title: &str) -> String {
    let t = format!("<title>{}</title>", escape(title));
    match k % 3 {
        0 => {
            format!("<circle cx=\"{cx:.1}\" cy=\"{cy:.1}\" r=\"5\" fill=\"{colour}\">{t}</circle>")
        }
        1 => format!(
            "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"9\" height=\"9\" fill=\"{colour}\">{t}</rect>",
            cx - 4.5,
            cy - 4.5
        ),
        _ => format!(
            "<polygon points=\"{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}\" fill=\"{colour}\">{t}</polygon>",
            cx,
            cy - 6.0,
            cx - 5.5,
            cy + 4.5,
            cx + 5.5,
            cy + 4.5
        ),
    }
}

/// A step of 1, 2 or 5 times a power of ten near `raw`.
fn nice_step(raw: f64) -> f64 {
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let p = 10f64.powf(raw.log10().floor());
    let m = raw / p;
    let n = if m < 1.5 {
        1.0
    } else if m < 3.5 {
        2.0
    } else if m < 7.5 {
        5.0
    } else {
        10.0
    };
    n * p
}
