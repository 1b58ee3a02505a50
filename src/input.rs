//! The one reader of input files (plan, study, log, roster): regular files only, at
//! most [`MAX_INPUT_BYTES`], UTF-8 with the position of the first bad byte, a
//! byte-order mark stripped, Windows (CRLF) and old Mac (lone CR) line endings read
//! as line ends. The same fault gives the same message whatever the file holds.
//! CSV files are split into records by the `csv` crate ([`csv_records`]).

use crate::error::{Error, InputError, Location};
use std::io::Read;
use std::path::Path;

/// The largest input file read, in bytes (16 MiB): far above any real plan, study,
/// log or roster, and small enough that a wrong path (a disk image, a device) is
/// refused at once instead of filling the memory.
pub const MAX_INPUT_BYTES: u64 = 16 * 1024 * 1024;

/// An input file as read: its text exactly as in the file (checked UTF-8) and its
/// name for messages.
#[derive(Debug, Clone)]
pub struct TextFile {
    /// The path as the user gave it.
    pub name: String,
    /// The bytes of the file, as text, unchanged.
    pub raw: String,
}

impl TextFile {
    /// The text without a leading byte-order mark, every line ending a `\n`.
    pub fn text(&self) -> String {
        normalise(&self.raw)
    }
}

/// `text` without a leading byte-order mark, with CRLF and lone CR turned into LF.
pub fn normalise(text: &str) -> String {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if !text.contains('\r') {
        return text.to_string();
    }
    text.replace("\r\n", "\n").replace('\r', "\n")
}

/// An unreadable-file error for `name`.
fn unreadable(name: &str, reason: impl Into<String>) -> Error {
    Error::Unreadable {
        path: name.to_string(),
        reason: reason.into(),
    }
}

/// The reason an I/O error stops a read, in plain words.
pub fn io_reason(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file".to_string(),
        std::io::ErrorKind::PermissionDenied => "permission denied".to_string(),
        _ => e.to_string(),
    }
}

/// Open `path` for reading without blocking on a pipe (the file kind is checked
/// before anything is read).
fn open(path: &Path) -> std::io::Result<std::fs::File> {
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(rustix::fs::OFlags::NONBLOCK.bits() as i32);
    }
    options.open(path)
}

/// Read the input file at `path`: see the module's description. A missing file, one
/// that is not a regular file, one over the size limit and one that is not UTF-8 are
/// all [`Error::Unreadable`] (exit 2).
pub fn read(path: &Path) -> Result<TextFile, Error> {
    read_limited(path, MAX_INPUT_BYTES)
}

/// The largest cohort shard file read, in bytes (4 GiB): a shard holds every run's
/// scalars of its part of the streams (docs/cluster.md).
pub const MAX_SHARD_BYTES: u64 = 4 * 1024 * 1024 * 1024;

/// Read the input file at `path` as [`read`] does, with `limit` bytes at most.
pub fn read_limited(path: &Path, limit: u64) -> Result<TextFile, Error> {
    let name = path.display().to_string();
    let file = open(path).map_err(|e| unreadable(&name, io_reason(&e)))?;
    let meta = file
        .metadata()
        .map_err(|e| unreadable(&name, io_reason(&e)))?;
    if !meta.is_file() {
        let what = if meta.is_dir() {
            "a folder"
        } else {
            "a device, pipe or socket"
        };
        return Err(unreadable(
            &name,
            format!("not a regular file ({what}); give the path of a file"),
        ));
    }
    let too_big = || {
        unreadable(
            &name,
            format!(
                "larger than {} MiB, the limit for an input file; check the path",
                limit / (1024 * 1024)
            ),
        )
    };
    if meta.len() > limit {
        return Err(too_big());
    }
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| unreadable(&name, io_reason(&e)))?;
    if bytes.len() as u64 > limit {
        return Err(too_big());
    }
    let raw = utf8(&name, bytes)?;
    Ok(TextFile { name, raw })
}

/// Read the input file at `path` and return its text ([`TextFile::text`]).
pub fn read_text(path: &Path) -> Result<(String, String), Error> {
    let f = read(path)?;
    let text = f.text();
    Ok((f.name, text))
}

/// The bytes as text, or an error naming the line and column (in characters, as
/// editors count) of the first byte that is not UTF-8.
fn utf8(name: &str, bytes: Vec<u8>) -> Result<String, Error> {
    String::from_utf8(bytes).map_err(|e| {
        let bytes = e.as_bytes();
        if bytes.starts_with(&[0xFF, 0xFE]) || bytes.starts_with(&[0xFE, 0xFF]) {
            return unreadable(
                name,
                "not UTF-8 text but UTF-16 (it starts with a UTF-16 byte-order mark); save the file as UTF-8",
            );
        }
        let good = e.utf8_error().valid_up_to();
        let before = &bytes[..good];
        let line = before.iter().filter(|b| **b == b'\n').count() + 1;
        let line_start = before
            .iter()
            .rposition(|b| *b == b'\n')
            .map_or(0, |i| i + 1);
        let col = String::from_utf8_lossy(&bytes[line_start..good])
            .chars()
            .count()
            + 1;
        unreadable(
            name,
            format!(
                "not UTF-8 text (byte 0x{:02X} at line {line}, column {col}); save the file as UTF-8",
                bytes[good]
            ),
        )
    })
}

/// One CSV record: the 1-based line it starts on and its cells, as written (not
/// trimmed).
#[derive(Debug, Clone, PartialEq)]
pub struct CsvRecord {
    /// The line the record starts on.
    pub line: usize,
    /// The cells.
    pub cells: Vec<String>,
}

/// Where and why CSV text stops being readable.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvFault {
    /// The 1-based line of the record.
    pub line: usize,
    /// The 0-based cell, when one is to blame.
    pub cell: Option<usize>,
    /// What is wrong and how to mend it.
    pub message: String,
}

impl CsvFault {
    /// The fault as a bad-input error in `file`, the cell named `key` if known.
    pub fn into_error(self, file: &str, key: Option<String>) -> Error {
        Error::Input(InputError {
            location: Location {
                file: file.to_string(),
                line: Some(self.line),
                column: self.cell.map(|c| c + 1),
            },
            key,
            message: self.message,
        })
    }
}

/// The records of CSV `text` (line endings already `\n`, as [`TextFile::text`]
/// gives), split by the `csv` crate: RFC 4180 quoting, `""` inside quotes is a quote;
/// rows may differ in length (the caller says what it allows). Empty lines are
/// skipped. A cell may not run over several lines: a quote left open is a fault at
/// the line and cell where it opens. With `comments`, a line starting with `#` is
/// skipped. Returns the records before the first fault, and the fault if any.
pub fn csv_records(text: &str, comments: bool) -> (Vec<CsvRecord>, Option<CsvFault>) {
    // A last line without its line end still closes a quoted cell there.
    let owned;
    let text = if text.is_empty() || text.ends_with('\n') {
        text
    } else {
        owned = format!("{text}\n");
        &owned
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .comment(comments.then_some(b'#'))
        .from_reader(text.as_bytes());
    let mut out = Vec::new();
    let (mut line, mut counted) = (1, 0);
    for record in reader.records() {
        let record = match record {
            Ok(r) => r,
            Err(e) => {
                let at = e.position().map_or(counted, |p| p.byte() as usize);
                let fault = CsvFault {
                    line: line + bytecount_newlines(&text.as_bytes()[counted..at.max(counted)]),
                    cell: None,
                    message: format!("cannot be read as CSV: {e}"),
                };
                return (out, Some(fault));
            }
        };
        // The crate's own line count and position leave out the blank (and comment)
        // lines before a record; count the line ends before its first byte instead.
        let start = skip_blank(
            text,
            record.position().map_or(0, |p| p.byte() as usize),
            comments,
        );
        line += bytecount_newlines(&text.as_bytes()[counted..start.max(counted)]);
        counted = counted.max(start);
        let cells: Vec<String> = record.iter().map(str::to_string).collect();
        if let Some(cell) = cells.iter().position(|c| c.contains('\n')) {
            let fault = CsvFault {
                line,
                cell: Some(cell),
                message: "a quote (\") opened in this cell is not closed on this line; close it (a cell cannot run over several lines)".to_string(),
            };
            return (out, Some(fault));
        }
        out.push(CsvRecord { line, cells });
    }
    (out, None)
}

/// The first byte at or after `at` that is not on an empty (or, with `comments`, a
/// comment) line.
fn skip_blank(text: &str, mut at: usize, comments: bool) -> usize {
    let bytes = text.as_bytes();
    while at < bytes.len() {
        match bytes[at] {
            b'\n' => at += 1,
            b'#' if comments => {
                at = text[at..].find('\n').map_or(bytes.len(), |i| at + i + 1);
            }
            _ => break,
        }
    }
    at
}

/// The number of `\n` in `bytes`.
fn bytecount_newlines(bytes: &[u8]) -> usize {
    bytes.iter().filter(|b| **b == b'\n').count()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_ends_and_mark() {
        assert_eq!(normalise("\u{feff}a\r\nb\rc\n"), "a\nb\nc\n");
    }

    #[test]
    fn csv_quotes_and_lines() {
        let (r, fault) = csv_records("#x,\"y\na,\"b, c\",\"d \"\"e\"\"\"\n\n1,2\n", true);
        assert_eq!(fault, None);
        assert_eq!(r.len(), 2);
        assert_eq!(r[0].cells, ["a", "b, c", "d \"e\""]);
        assert_eq!((r[1].line, r[1].cells.len()), (4, 2));
        let (r, _) = csv_records("a\n\n\n1\n#c\n\n2\n", true);
        let lines: Vec<usize> = r.iter().map(|x| x.line).collect();
        assert_eq!(lines, [1, 4, 7]);
        for text in ["a,b\n1,\"x\n2,3\n", "a,b\n1,\"x"] {
            let (r, fault) = csv_records(text, false);
            let fault = fault.expect("an open quote");
            assert_eq!((r.len(), fault.line, fault.cell), (1, 2, Some(1)));
        }
    }
}
