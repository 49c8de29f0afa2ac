//! From text to records: encoding, comments, delimiter detection and the CSV reader.
//!
//! Comment lines (first non-blank character `#`) are set aside before the CSV reader sees the
//! text, so a stray quote in a comment cannot swallow data; blank lines are skipped; line numbers
//! are kept exactly as in the input (CR, LF and CRLF line ends all count as one line end).

use serde::{Deserialize, Serialize};

use super::cell::is_cell_space;
use crate::error::{Error, Result};

/// How the cells of a row are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Delimiter {
    /// `,`
    Comma,
    /// Tab (spreadsheet pastes).
    Tab,
    /// `;` (spreadsheets in locales with a decimal comma).
    Semicolon,
    /// Runs of spaces and tabs (aligned columns, gnuplot-style files).
    Whitespace,
}

impl Delimiter {
    /// Name for people and the command line.
    pub fn name(self) -> &'static str {
        match self {
            Delimiter::Comma => "comma",
            Delimiter::Tab => "tab",
            Delimiter::Semicolon => "semicolon",
            Delimiter::Whitespace => "whitespace",
        }
    }

    /// Reads a delimiter name (`comma`, `tab`, `semicolon`, `whitespace`, or the character itself).
    pub fn parse(text: &str) -> Result<Delimiter> {
        match text.trim().to_ascii_lowercase().as_str() {
            "comma" | "," => Ok(Delimiter::Comma),
            "tab" | "\t" | "\\t" => Ok(Delimiter::Tab),
            "semicolon" | ";" => Ok(Delimiter::Semicolon),
            "whitespace" | "space" | "spaces" | " " => Ok(Delimiter::Whitespace),
            other => Err(Error::parameter(
                "delimiter",
                format!("'{other}' is not a delimiter: use comma, tab, semicolon or whitespace"),
            )),
        }
    }

    fn byte(self) -> u8 {
        match self {
            Delimiter::Comma => b',',
            Delimiter::Tab => b'\t',
            Delimiter::Semicolon => b';',
            Delimiter::Whitespace => b' ',
        }
    }
}

/// One record of the table: its first line number and its trimmed cells.
#[derive(Debug, Clone)]
pub(crate) struct Record {
    pub line: usize,
    /// Last line the record spans (differs from `line` only for quoted cells with line breaks).
    pub last_line: usize,
    pub cells: Vec<String>,
}

/// The table as records, before any meaning is given to the columns.
#[derive(Debug, Clone)]
pub(crate) struct RawTable {
    pub delimiter: Delimiter,
    pub records: Vec<Record>,
    /// Comment lines: line number and the text after the leading `#` characters.
    pub comments: Vec<(usize, String)>,
}

/// Decodes the bytes of a file: UTF-8 (with or without BOM), UTF-16 with a BOM (spreadsheet
/// "Unicode text" exports), else ISO-8859-1 (Latin-1). Returns the text and the encoding name.
pub fn decode(bytes: &[u8]) -> (String, &'static str) {
    if let Some(rest) = bytes.strip_prefix(&[0xEF, 0xBB, 0xBF])
        && let Ok(s) = std::str::from_utf8(rest)
    {
        return (s.to_string(), "UTF-8");
    }
    for (bom, le, name) in [
        ([0xFF, 0xFE], true, "UTF-16LE"),
        ([0xFE, 0xFF], false, "UTF-16BE"),
    ] {
        if let Some(rest) = bytes.strip_prefix(&bom) {
            let units: Vec<u16> = rest
                .chunks_exact(2)
                .map(|c| {
                    if le {
                        u16::from_le_bytes([c[0], c[1]])
                    } else {
                        u16::from_be_bytes([c[0], c[1]])
                    }
                })
                .collect();
            return (String::from_utf16_lossy(&units), name);
        }
    }
    match std::str::from_utf8(bytes) {
        Ok(s) => (s.to_string(), "UTF-8"),
        Err(_) => (bytes.iter().map(|&b| b as char).collect(), "ISO-8859-1"),
    }
}

fn is_comment(line: &str) -> bool {
    line.trim_start_matches(is_cell_space).starts_with('#')
}

/// Counts `byte` outside double quotes in `line`.
fn count_outside_quotes(line: &str, byte: u8) -> usize {
    let mut inside = false;
    let mut n = 0;
    for b in line.bytes() {
        if b == b'"' {
            inside = !inside;
        } else if b == byte && !inside {
            n += 1;
        }
    }
    n
}

/// Chooses the delimiter from up to 50 data lines: the first of tab, semicolon, comma found in
/// at least 80 % of them (a title line or two may lack it), else whitespace.
fn sniff(lines: &[&str]) -> Delimiter {
    let sample: Vec<&str> = lines
        .iter()
        .copied()
        .filter(|l| !l.trim().is_empty())
        .take(50)
        .collect();
    if sample.is_empty() {
        return Delimiter::Whitespace;
    }
    for d in [Delimiter::Tab, Delimiter::Semicolon, Delimiter::Comma] {
        let with = sample
            .iter()
            .filter(|l| count_outside_quotes(l, d.byte()) > 0)
            .count();
        if with * 5 >= sample.len() * 4 {
            return d;
        }
    }
    Delimiter::Whitespace
}

/// Splits the text into records with `csv-core` (the parser of the `csv` crate).
pub(crate) fn read_records(text: &str, delimiter: Option<Delimiter>) -> Result<RawTable> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    // Set comment lines aside, keeping line numbers (a comment becomes an empty line).
    let mut comments = Vec::new();
    let mut data_lines: Vec<&str> = Vec::new();
    let mut any_comment = false;
    for (i, raw) in split_lines(text).into_iter().enumerate() {
        if is_comment(raw) {
            any_comment = true;
            let body = raw
                .trim_start_matches(is_cell_space)
                .trim_start_matches('#');
            comments.push((i + 1, body.trim_matches(is_cell_space).to_string()));
            data_lines.push("");
        } else {
            data_lines.push(raw);
        }
    }
    let delimiter = delimiter.unwrap_or_else(|| sniff(&data_lines));
    let needs_rewrite = any_comment || text.contains('\r') || delimiter == Delimiter::Whitespace;
    let body: std::borrow::Cow<'_, str> = if needs_rewrite {
        let mut s = String::with_capacity(text.len());
        for l in &data_lines {
            if delimiter == Delimiter::Whitespace {
                s.push_str(&l.replace('\t', " "));
            } else {
                s.push_str(l);
            }
            s.push('\n');
        }
        s.into()
    } else {
        text.into()
    };

    // `csv-core` is the parser under the `csv` crate's reader; driven directly, over text that
    // is already in memory, it splits exactly as that reader does without its `std::io` layer.
    let mut reader = csv_core::ReaderBuilder::new()
        .delimiter(delimiter.byte())
        .terminator(csv_core::Terminator::Any(b'\n'))
        .build();
    // Line numbers from byte offsets (the reader's own line count skips blank lines).
    let line_starts: Vec<usize> = std::iter::once(0)
        .chain(
            body.bytes()
                .enumerate()
                .filter(|&(_, b)| b == b'\n')
                .map(|(i, _)| i + 1),
        )
        .collect();
    // A record starts where the previous one ended; skip the blank lines after it.
    let body_bytes = body.as_bytes();
    let line_of = |byte: usize| {
        let mut b = byte.min(body_bytes.len());
        while body_bytes.get(b) == Some(&b'\n') {
            b += 1;
        }
        line_starts.partition_point(|&s| s <= b)
    };
    let mut records = Vec::new();
    let mut consumed = 0;
    let mut fields = vec![0u8; 1024];
    let mut ends = vec![0usize; 32];
    loop {
        let start = consumed;
        let Some(n_fields) = next_record(
            &mut reader,
            body_bytes,
            &mut consumed,
            &mut fields,
            &mut ends,
        ) else {
            break;
        };
        let line = line_of(start);
        let raw_cells: Vec<&str> = (0..n_fields)
            .map(|i| {
                let from = if i == 0 { 0 } else { ends[i - 1] };
                // Fields are cut at ASCII bytes out of valid UTF-8, so they are valid UTF-8.
                std::str::from_utf8(&fields[from..ends[i]]).unwrap_or_default()
            })
            .collect();
        let mut cells: Vec<String> = Vec::with_capacity(raw_cells.len());
        for field in &raw_cells {
            let t = field.trim_matches(is_cell_space);
            if delimiter == Delimiter::Whitespace && t.is_empty() {
                continue;
            }
            cells.push(t.to_string());
        }
        if cells.iter().all(String::is_empty) {
            continue;
        }
        // Count line breaks in the untrimmed cells: trimming may remove some.
        let span = raw_cells
            .iter()
            .map(|f| f.matches('\n').count())
            .sum::<usize>();
        records.push(Record {
            line,
            last_line: line + span,
            cells,
        });
    }
    Ok(RawTable {
        delimiter,
        records,
        comments,
    })
}

/// Reads the next record of `input[*consumed..]` into `fields` (the field bytes, unquoted) and
/// `ends` (where each field ends in `fields`), growing both as needed, and advances `consumed`.
/// Returns the number of fields, or `None` at the end of the input.
fn next_record(
    reader: &mut csv_core::Reader,
    input: &[u8],
    consumed: &mut usize,
    fields: &mut Vec<u8>,
    ends: &mut Vec<usize>,
) -> Option<usize> {
    use csv_core::ReadRecordResult;
    let (mut n_out, mut n_ends) = (0, 0);
    loop {
        let rest = input.get(*consumed..).unwrap_or_default();
        let (result, n_in, n_o, n_e) =
            reader.read_record(rest, &mut fields[n_out..], &mut ends[n_ends..]);
        *consumed += n_in;
        n_out += n_o;
        n_ends += n_e;
        match result {
            // All input consumed: the next call passes no input, which ends the last record.
            ReadRecordResult::InputEmpty => {}
            ReadRecordResult::OutputFull => fields.resize(fields.len() * 2, 0),
            ReadRecordResult::OutputEndsFull => ends.resize(ends.len() * 2, 0),
            ReadRecordResult::Record => return Some(n_ends),
            ReadRecordResult::End => return None,
        }
    }
}

/// Splits on CRLF, LF or lone CR.
fn split_lines(text: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let bytes = text.as_bytes();
    let mut start = 0;
    let mut i = 0;
    while i < bytes.len() {
        match bytes[i] {
            b'\n' => {
                out.push(&text[start..i]);
                start = i + 1;
            }
            b'\r' => {
                out.push(&text[start..i]);
                if bytes.get(i + 1) == Some(&b'\n') {
                    i += 1;
                }
                start = i + 1;
            }
            _ => {}
        }
        i += 1;
    }
    if start < bytes.len() {
        out.push(&text[start..]);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cells(t: &RawTable) -> Vec<(usize, Vec<String>)> {
        t.records
            .iter()
            .map(|r| (r.line, r.cells.clone()))
            .collect()
    }

    #[test]
    fn delimiters_and_line_numbers() {
        let t = read_records("v,E\r\n0,1\r\n\r\n# c\r\n1,2\r\n", None).expect("ok");
        assert_eq!(t.delimiter, Delimiter::Comma);
        assert_eq!(
            cells(&t),
            vec![
                (1, vec!["v".into(), "E".into()]),
                (2, vec!["0".into(), "1".into()]),
                (5, vec!["1".into(), "2".into()])
            ]
        );
        assert_eq!(t.comments, vec![(4, "c".to_string())]);
        let t = read_records("\u{feff}v;E\n0;1,5\n", None).expect("ok");
        assert_eq!(t.delimiter, Delimiter::Semicolon);
        let t = read_records("v\tE\n0\t1\n", None).expect("ok");
        assert_eq!(t.delimiter, Delimiter::Tab);
        let t = read_records("  v    E  \n 0   1\n\t1 \t 2\n", None).expect("ok");
        assert_eq!(t.delimiter, Delimiter::Whitespace);
        assert_eq!(t.records[2].cells, vec!["1".to_string(), "2".to_string()]);
        let t = read_records("a \"x \"\"y\"\" z\" b\n", Some(Delimiter::Whitespace)).expect("ok");
        assert_eq!(t.records[0].cells, vec!["a", "x \"y\" z", "b"]);
        let t = read_records("v,E\r0,1\r1,2", None).expect("ok");
        assert_eq!(
            t.records.iter().map(|r| r.line).collect::<Vec<_>>(),
            vec![1, 2, 3]
        );
    }

    /// Records longer than the reader's first buffers (1024 bytes, 32 fields) come out whole,
    /// with quoted line breaks counted in the record's line span. SOURCE: the input itself
    /// (RFC 4180 quoting: `""` inside quotes is one `"`).
    #[test]
    fn long_records_and_quoted_line_breaks() {
        let wide: Vec<String> = (0..70).map(|i| i.to_string()).collect();
        let long = "x".repeat(3000);
        let text = format!("{}\n\"{long}\",\"a\nb \"\"q\"\"\"\n\n7,8\n", wide.join(","));
        let t = read_records(&text, Some(Delimiter::Comma)).expect("ok");
        assert_eq!(t.records.len(), 3);
        assert_eq!(t.records[0].cells, wide);
        assert_eq!(t.records[1].cells, vec![long, "a\nb \"q\"".to_string()]);
        assert_eq!((t.records[1].line, t.records[1].last_line), (2, 3));
        assert_eq!((t.records[2].line, t.records[2].cells.len()), (5, 2));
    }

    #[test]
    fn decoding() {
        assert_eq!(decode(b"\xEF\xBB\xBFv,E").0, "v,E");
        let utf16: Vec<u8> = [0xFF, 0xFE]
            .into_iter()
            .chain("v\tE".encode_utf16().flat_map(u16::to_le_bytes))
            .collect();
        assert_eq!(decode(&utf16), ("v\tE".to_string(), "UTF-16LE"));
        assert_eq!(decode(b"\xC5 (air)"), ("Å (air)".to_string(), "ISO-8859-1"));
    }
}
