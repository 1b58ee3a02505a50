#!/usr/bin/python3
"""Check a dosewright calendar with the Python icalendar package (Debian
python3-icalendar), a reader independent of the Rust crate that wrote it.

Usage: check-ics.py CALENDAR.ics SCHEDULE.json [SCENARIO] [--previous OLD.ics]

SCHEDULE.json is `dosewright schedule PLAN --format json` of the same plan (and log);
SCENARIO is the name given to `calendar --scenario` (default: the first scenario).
Checks (RFC 5545): VERSION 2.0 and PRODID once each (3.6); every VEVENT has UID,
DTSTAMP (in UTC, 3.8.7.2), DTSTART and DTEND (3.6.1) and reads without errors; UIDs
are unique (3.8.4.7); one event per planned session, in date order; a timed event
lasts the whole session, an all-day event one day (DTEND exclusive, 3.8.2.2).
Events with STATUS:CANCELLED (3.8.1.11) are not planned sessions: the others are
matched one for one with the schedule's sessions.
With --previous OLD.ics (the calendar written before a re-plan, at the same --out):
every UID of OLD is in the new calendar; an event whose content (SUMMARY,
DESCRIPTION, DTSTART, DTEND, LOCATION) is unchanged keeps its SEQUENCE, a changed
one has the old SEQUENCE plus one (3.8.7.4; no SEQUENCE reads as 0); an event of
OLD that the re-plan no longer has is cancelled (STATUS:CANCELLED) with its
SEQUENCE one higher, or kept as it was if it was cancelled already; an event new to
the re-plan has SEQUENCE 0; DTSTAMP not earlier than before.
Prints "check-ics: ... ok" and exits 0, or lists the problems and exits 1.
"""

import datetime
import json
import sys

import icalendar


def planned_sessions(schedule, name):
    scenarios = schedule["scenarios"]
    if name is None:
        scenario = scenarios[0]
    else:
        matching = [s for s in scenarios if s["name"] == name]
        if not matching:
            sys.exit("check-ics: no scenario named %r in the schedule" % name)
        scenario = matching[0]
    return [
        s
        for w in scenario["weeks"]
        if w["phase"] == "protocol"
        for s in w["sessions"]
    ]


CONTENT = ("SUMMARY", "DESCRIPTION", "DTSTART", "DTEND", "LOCATION")


def sequence(ev):
    return int(ev.get("SEQUENCE", 0))


def cancelled(ev):
    return str(ev.get("STATUS", "")).upper() == "CANCELLED"


def content(ev):
    return tuple(
        ev.decoded(k) if k in ("DTSTART", "DTEND") and k in ev else str(ev.get(k, ""))
        for k in CONTENT
    )


def compare_previous(path, events, problems):
    """The re-plan checks of --previous against every event of the new calendar.
    Returns (changed, cancelled now, new)."""
    with open(path, "rb") as f:
        old = {str(e["UID"]): e for e in icalendar.Calendar.from_ical(f.read()).walk("VEVENT")}
    new = {str(e["UID"]): e for e in events}
    if not set(old) <= set(new):
        problems.append(
            "%d UID(s) of %s missing from the new calendar (neither kept nor cancelled)"
            % (len(set(old) - set(new)), path)
        )
    changed = 0
    cancelled_now = 0
    for uid in sorted(set(old) & set(new)):
        o, n = old[uid], new[uid]
        if cancelled(n) and not cancelled(o):
            want = sequence(o) + 1
            cancelled_now += 1
        elif content(o) == content(n) and cancelled(o) == cancelled(n):
            want = sequence(o)
        else:
            want = sequence(o) + 1
            changed += 1
        if sequence(n) != want:
            problems.append(
                "%s: SEQUENCE %d, want %d (before %d, %s)"
                % (uid, sequence(n), want, sequence(o), "changed" if want > sequence(o) else "unchanged")
            )
        if "DTSTAMP" in o and "DTSTAMP" in n and n.decoded("DTSTAMP") < o.decoded("DTSTAMP"):
            problems.append("%s: DTSTAMP earlier than before" % uid)
    added = sorted(set(new) - set(old))
    for uid in added:
        if cancelled(new[uid]):
            problems.append("%s: cancelled, but %s did not have it" % (uid, path))
        if sequence(new[uid]) != 0:
            problems.append("%s: new, with SEQUENCE %d, want 0" % (uid, sequence(new[uid])))
    return changed, cancelled_now, len(added)


def main(argv):
    previous = None
    if "--previous" in argv:
        i = argv.index("--previous")
        if i + 1 >= len(argv):
            sys.exit(__doc__)
        previous = argv[i + 1]
        argv = argv[:i] + argv[i + 2 :]
    if len(argv) not in (3, 4):
        sys.exit(__doc__)
    with open(argv[1], "rb") as f:
        data = f.read()
    with open(argv[2], encoding="utf-8") as f:
        schedule = json.load(f)
    sessions = planned_sessions(schedule, argv[3] if len(argv) == 4 else None)

    problems = []
    cal = icalendar.Calendar.from_ical(data)
    for key in ("VERSION", "PRODID"):
        # A repeated property reads as a list.
        if cal.get(key) is None or isinstance(cal.get(key), list):
            problems.append("%s is not there exactly once" % key)
    if str(cal.get("VERSION")) != "2.0":
        problems.append("VERSION is %r, not 2.0" % cal.get("VERSION"))
    every = cal.walk("VEVENT")
    uids = set()
    stamps = set()
    for i, ev in enumerate(every):
        uid = str(ev.get("UID", ""))
        label = uid or "event %d" % (i + 1)
        if getattr(ev, "errors", None):
            problems.append("%s: read with errors %r" % (label, ev.errors))
        for key in ("UID", "DTSTAMP", "DTSTART", "DTEND"):
            if key not in ev:
                problems.append("%s: no %s" % (label, key))
        if uid in uids:
            problems.append("%s: UID twice" % label)
        uids.add(uid)
        if "DTSTAMP" in ev:
            stamp = ev.decoded("DTSTAMP")
            if stamp.utcoffset() != datetime.timedelta(0):
                problems.append("%s: DTSTAMP not in UTC" % label)
            stamps.add(stamp)
    if len(stamps) > 1:
        problems.append("more than one DTSTAMP: %s" % sorted(stamps))
    events = [ev for ev in every if not cancelled(ev)]

    if len(events) != len(sessions):
        problems.append(
            "%d events for %d planned sessions" % (len(events), len(sessions))
        )
    for ev, s in zip(events, sessions):
        if "DTSTART" not in ev or "DTEND" not in ev:
            continue
        start, end = ev.decoded("DTSTART"), ev.decoded("DTEND")
        label = str(ev.get("UID"))
        if isinstance(start, datetime.datetime):
            if start.date().isoformat() != s["date"]:
                problems.append("%s: starts %s, session on %s" % (label, start, s["date"]))
            minutes = (end - start).total_seconds() / 60
            if minutes != s["session_minutes"]:
                problems.append(
                    "%s: lasts %g min, session %d min"
                    % (label, minutes, s["session_minutes"])
                )
        else:
            if start.isoformat() != s["date"]:
                problems.append("%s: on %s, session on %s" % (label, start, s["date"]))
            if end - start != datetime.timedelta(days=1):
                problems.append("%s: all-day event of %s" % (label, end - start))

    replan = ""
    if previous is not None:
        changed, cancelled_now, added = compare_previous(previous, every, problems)
        replan = ", against %s: same UIDs, SEQUENCE raised on %d changed event(s) and kept on the others" % (
            previous,
            changed,
        )
        if cancelled_now or added:
            replan += ", %d cancelled, %d new" % (cancelled_now, added)

    if problems:
        print("check-ics: %s: %d problem(s)" % (argv[1], len(problems)))
        for p in problems:
            print("  - " + p)
        return 1
    print(
        "check-ics: %s: %d events for %d planned sessions, unique UIDs, durations match%s: ok"
        % (argv[1], len(events), len(sessions), replan)
    )
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
