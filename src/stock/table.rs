//! CSV text as biasfit reads it, shared by every CSV it accepts (the stock, the catalogue, the order list):
//! UTF-8 with or without a byte-order mark, LF, CRLF or CR-only line ends (old spreadsheet exports) alike,
//! blank lines and `#` comment lines skipped, the delimiter (comma, semicolon or tab) read from the header
//! line, and columns found by header name in any order and case. A header may carry its unit in brackets
//! (`Value (Ω)`, `Power [mW]`, `Tol (%)`): a bare number under it is read in that unit, and a unit biasfit
//! cannot apply to the column is refused rather than guessed. A row of bare delimiters (`;;;`, as
//! spreadsheets write an empty row) is skipped like a blank line.
//!
//! Every record is one line (a quoted field may not span lines), and every field remembers the byte range of
//! its text in the file, so that a command can rewrite one field and keep every other byte as it was. Nothing
//! here knows what a column means; each file kind names its columns in a [`Schema`].
//!
//! Why this reader rather than the `csv` crate (a measured reason, issue 18): the stock edits rewrite one
//! field in place, so every field needs its byte range in the file, and the crate gives none (a record's
//! field ranges index its own buffer, with delimiters and quotes dropped). Measured on the 58 CSV files of
//! the bad-input corpus, the fixtures and the demo stocks, the crate's ranges put 1 992 of 2 585 fields at
//! the wrong byte, and its record layer reads without complaint two corpus files this reader refuses at
//! their line (text after a closing quote; an unclosed quote, which it lets run to the end of the file).
//! Keeping every message and span would mean re-scanning each line by hand after the crate, so the crate
//! would only add a second parser.

use crate::notation::text::{invisible_name, show_invisible};
use itertools::Itertools;
use std::collections::HashMap;
use std::ops::Range;
use std::path::Path;

/// A column a file kind reads, with the header names it accepts for it (lower case).
#[derive(Clone, Copy, Debug)]
pub struct Column {
    /// The name biasfit uses for it in messages.
    pub name: &'static str,
    /// Header names that mean this column, compared without case after [`header_name`] has dropped a unit
    /// in brackets, a trailing dot, and `_`/`-` between words.
    pub aliases: &'static [&'static str],
    /// Whether the header must have it.
    pub required: bool,
}

/// How a kind of file is described in messages, and the columns it reads.
#[derive(Clone, Copy, Debug)]
pub struct Schema {
    /// What the file is ("stock file", "catalogue").
    pub kind: &'static str,
    /// The columns; others in the file are kept and ignored.
    pub columns: &'static [Column],
    /// A header line to suggest when there is none.
    pub example_header: &'static str,
}

impl Schema {
    /// "columns value and qty, optionally tolerance, power, location, note".
    fn expected(&self) -> String {
        let names = |required: bool| {
            self.columns
                .iter()
                .filter(|c| c.required == required)
                .map(|c| c.name)
                .collect::<Vec<_>>()
        };
        let required = names(true);
        let required = match required.split_last() {
            Some((last, [])) => format!("column {last}"),
            Some((last, rest)) => format!("columns {} and {last}", rest.join(", ")),
            None => "any columns".to_string(),
        };
        let optional = names(false);
        if optional.is_empty() {
            required
        } else {
            format!("{required}, optionally {}", optional.join(", "))
        }
    }
}

/// Why a CSV file was refused.
#[derive(Debug, thiserror::Error)]
pub enum CsvError {
    /// The file could not be read, or is not one biasfit reads (a device, a FIFO, too large).
    #[error(transparent)]
    Input(#[from] crate::input::InputError),
    /// The file is not UTF-8 text.
    #[error("{file}:{line}: the file is not UTF-8 text (byte {byte}); save it as UTF-8 CSV")]
    NotUtf8 {
        /// The file.
        file: String,
        /// 1-based line of the first bad byte.
        line: usize,
        /// 1-based byte offset in the line.
        byte: usize,
    },
    /// The file is UTF-16 text (it starts with a UTF-16 byte-order mark), as some spreadsheets save it.
    #[error("{file}:1: the file is UTF-16 text; save it as UTF-8 CSV")]
    Utf16 {
        /// The file.
        file: String,
    },
    /// No header row.
    #[error("{file}: the file has no header row; expected a first line such as {example}")]
    NoHeader {
        /// The file.
        file: String,
        /// A header line that would do.
        example: &'static str,
    },
    /// A required column is not in the header.
    #[error(
        "{file}:{line}: no '{column}' column in the header ({found}){hidden}; expected {expected}"
    )]
    MissingColumn {
        /// The file.
        file: String,
        /// The header's line.
        line: usize,
        /// The required column.
        column: &'static str,
        /// The header as found.
        found: String,
        /// The columns the file kind reads.
        expected: String,
        /// An invisible character that hides the column, named (", but there is a byte-order mark (U+FEFF)
        /// before 'value', which cannot be seen: delete it"), or nothing.
        hidden: String,
    },
    /// The header names a column twice.
    #[error("{file}:{line}: the header names column '{column}' twice; keep one")]
    DuplicateColumn {
        /// The file.
        file: String,
        /// The header's line.
        line: usize,
        /// The repeated column.
        column: String,
    },
    /// A header names a known column with a unit in brackets that cannot be applied to it.
    #[error("{file}:{line}: the header '{header}' gives the unit '{unit}', which biasfit cannot apply to the {column} column; expected {expected}, or no unit in the header and one in each field")]
    HeaderUnit {
        /// The file.
        file: String,
        /// The header's line.
        line: usize,
        /// The header text as found.
        header: String,
        /// The unit as found.
        unit: String,
        /// The column it names.
        column: &'static str,
        /// The units that column accepts.
        expected: &'static str,
    },
    /// A field could not be read.
    #[error("{file}:{line}: column {column}: {message}")]
    Field {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// The column's name.
        column: &'static str,
        /// What is wrong and what is expected, quoting the text.
        message: String,
    },
    /// A row's shape is wrong (too many fields, broken quoting), or it clashes with another row.
    #[error("{file}:{line}: {message}")]
    Row {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// What is wrong.
        message: String,
    },
}

/// One field of a record.
#[derive(Clone, Debug, PartialEq)]
pub struct Field {
    /// The text, unquoted and trimmed.
    pub text: String,
    /// Where the trimmed text sits in the file's bytes (inside the quotes of a quoted field).
    pub span: Range<usize>,
}

/// One line of the file that holds fields (the header or a data row).
#[derive(Clone, Debug, PartialEq)]
pub struct Record {
    /// 1-based line in the file.
    pub line: usize,
    /// The fields, in file order.
    pub fields: Vec<Field>,
}

/// The line end a file uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LineEnd {
    /// `\n`.
    Lf,
    /// `\r\n`.
    CrLf,
    /// `\r` alone, as old spreadsheet programs wrote.
    Cr,
}

impl LineEnd {
    /// The bytes of the line end.
    pub fn as_str(self) -> &'static str {
        match self {
            LineEnd::Lf => "\n",
            LineEnd::CrLf => "\r\n",
            LineEnd::Cr => "\r",
        }
    }
}

/// How a file is laid out, so that rows appended to it look like its own.
#[derive(Clone, Debug, PartialEq)]
pub struct Layout {
    /// The field delimiter found in the header line.
    pub delimiter: u8,
    /// The header line's line end.
    pub line_end: LineEnd,
    /// Whether the file's last line is terminated.
    pub ends_with_newline: bool,
    /// How many fields the header has.
    pub width: usize,
    /// Where each column the schema knows sits in the header (by the schema's name).
    pub columns: HashMap<&'static str, usize>,
}

impl Default for Layout {
    /// A comma-separated, LF-terminated file with no known columns.
    fn default() -> Self {
        Layout {
            delimiter: b',',
            line_end: LineEnd::Lf,
            ends_with_newline: true,
            width: 0,
            columns: HashMap::new(),
        }
    }
}

impl Layout {
    /// A row in this file's column order and delimiter, ending in its line end: each known column's text is
    /// taken from `fields` (blank when absent), and unknown columns are left blank.
    pub fn row(&self, fields: &[(&str, &str)]) -> String {
        let mut cells = vec![String::new(); self.width];
        for (name, text) in fields {
            if let Some(&i) = self.columns.get(name) {
                cells[i] = quote(text, self.delimiter);
            }
        }
        let mut line = cells.join(&(self.delimiter as char).to_string());
        line.push_str(self.line_end.as_str());
        line
    }
}

/// A field's text as it must be written: quoted when it holds the delimiter, a quote, or edge spaces.
pub fn quote(text: &str, delimiter: u8) -> String {
    let needs = text.contains(delimiter as char)
        || text.contains('"')
        || text.starts_with(char::is_whitespace)
        || text.ends_with(char::is_whitespace)
        || text.starts_with('#');
    if needs {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

/// A CSV file, read and checked against a schema.
#[derive(Clone, Debug)]
pub struct Table {
    /// The file it came from, as given.
    pub file: String,
    /// The header line.
    pub header: Record,
    /// The data rows, in file order.
    pub records: Vec<Record>,
    /// How the file is laid out.
    pub layout: Layout,
    /// Things the user should know that did not stop the read.
    pub warnings: Vec<String>,
    /// Header texts of the columns no schema column claims (blank headers left out), in file order.
    pub ignored: Vec<String>,
}

/// Reads a file's bytes, naming the file and its kind if that fails.
pub fn read_bytes(path: &Path, kind: &'static str) -> Result<Vec<u8>, CsvError> {
    Ok(crate::input::read(path, kind)?)
}

/// The lines of a text: (byte offset of the line, its text without the line end, the line end if any).
/// LF, CRLF and a CR alone each end a line, so a file reads the same whichever its program wrote.
fn lines(text: &str) -> impl Iterator<Item = (usize, &str, Option<LineEnd>)> {
    let bytes = text.as_bytes();
    let mut at = 0;
    std::iter::from_fn(move || {
        if at > bytes.len() || (at == bytes.len() && at > 0 && ends_line(bytes[at - 1])) {
            return None;
        }
        let start = at;
        let len = bytes[start..]
            .iter()
            .position(|&b| ends_line(b))
            .unwrap_or(bytes.len() - start);
        let end = start + len;
        let (line_end, next) = match bytes.get(end) {
            None => (None, end + 1),
            Some(b'\n') => (Some(LineEnd::Lf), end + 1),
            Some(_) if bytes.get(end + 1) == Some(&b'\n') => (Some(LineEnd::CrLf), end + 2),
            Some(_) => (Some(LineEnd::Cr), end + 1),
        };
        at = next;
        // Both ends sit on ASCII bytes, so the slice falls on character boundaries.
        Some((start, &text[start..end], line_end))
    })
}

fn ends_line(b: u8) -> bool {
    b == b'\n' || b == b'\r'
}

/// How many line ends (LF, CRLF or CR alone) a file's bytes hold.
pub fn line_ends(bytes: &[u8]) -> usize {
    bytes
        .iter()
        .enumerate()
        .filter(|&(i, &b)| b == b'\n' || (b == b'\r' && bytes.get(i + 1) != Some(&b'\n')))
        .count()
}

/// The 1-based line and column of a byte offset.
fn line_of(bytes: &[u8], offset: usize) -> (usize, usize) {
    let before = &bytes[..offset.min(bytes.len())];
    let line = line_ends(before) + 1;
    let col = offset
        - before
            .iter()
            .rposition(|&b| ends_line(b))
            .map_or(0, |p| p + 1)
        + 1;
    (line, col)
}

/// Names the invisible character that keeps a header field from naming `column` ("value" behind a
/// byte-order mark that joining two files left in the middle), so the message says what cannot be seen.
fn hidden_column(column: &Column, fields: &[Field]) -> String {
    for f in fields {
        let Some(c) = f
            .text
            .chars()
            .find_map(|c| invisible_name(c).map(|n| (c, n)))
        else {
            continue;
        };
        let clean: String = f
            .text
            .chars()
            .filter(|&c| invisible_name(c).is_none())
            .collect();
        let clean = clean.trim().to_lowercase();
        if !column.aliases.contains(&clean.as_str()) {
            continue;
        }
        let (ch, name) = c;
        let place = if f.text.trim_start().starts_with(ch) {
            "before"
        } else if f.text.trim_end().ends_with(ch) {
            "after"
        } else {
            "inside"
        };
        return format!(
            ", but there is {name} {place} '{clean}', which cannot be seen: delete it (retype the header line)"
        );
    }
    String::new()
}

/// Whether a line carries no fields: blank, or a `#` comment.
fn is_skipped(line: &str) -> bool {
    let t = line.trim();
    t.is_empty() || t.starts_with('#')
}

/// Whether a data line holds only delimiters and spaces (`,,,`, as spreadsheets write an empty row).
fn is_bare_delimiters(line: &str, delimiter: u8) -> bool {
    line.bytes()
        .all(|b| b == delimiter || b == b' ' || b == b'\t')
}

/// A header cell as compared with the schema's names, and the unit it gives in brackets, if any:
/// `Value (Ω)` is ("value", Some("Ω")), `On_Hand` is ("on hand", None), `Qty.` is ("qty", None).
pub fn header_name(text: &str) -> (String, Option<String>) {
    let t = text.trim();
    let (name, unit) = match (t.chars().last(), t.rfind(['(', '['])) {
        (Some(close @ (')' | ']')), Some(open))
            if (close == ')') == (t.as_bytes()[open] == b'(') =>
        {
            let unit = t[open + 1..t.len() - 1].trim();
            (&t[..open], (!unit.is_empty()).then(|| unit.to_string()))
        }
        _ => (t, None),
    };
    let name = name
        .trim()
        .trim_end_matches('.')
        .to_lowercase()
        .replace(['_', '-'], " ");
    (name.split_whitespace().join(" "), unit)
}

/// How a bare number under a known column with a unit in its header is read: the suffix that makes the
/// field say its unit, or None when biasfit cannot apply the unit (with the units it can).
fn unit_suffix(column: &str, unit: &str) -> Result<&'static str, &'static str> {
    let lower = unit.to_lowercase();
    // The SI prefix letters differ only by case (mΩ, MΩ), so the prefix is compared as written.
    match column {
        "value" => match unit {
            "Ω" | "R" | "r" => Ok(""),
            "kΩ" | "k" | "K" => Ok("k"),
            "MΩ" | "M" => Ok("M"),
            _ if ["ohm", "ohms"].contains(&lower.as_str()) => Ok(""),
            _ if ["kohm", "kohms"].contains(&lower.as_str()) => Ok("k"),
            _ if unit.starts_with('M') && ["mohm", "mohms"].contains(&lower.as_str()) => Ok("M"),
            _ => Err("Ω, kΩ or MΩ (or ohm, kohm, Mohm)"),
        },
        "power" => match unit {
            "mW" => Ok("mW"),
            _ if ["w", "watt", "watts"].contains(&lower.as_str()) => Ok("W"),
            _ => Err("W or mW"),
        },
        "tolerance" => match unit {
            "%" | "±%" | "+/-%" => Ok("%"),
            _ => Err("%"),
        },
        "qty" => match lower.as_str() {
            "pcs" | "pc" | "pieces" | "pcs." | "count" => Ok(""),
            _ => Err("pcs"),
        },
        _ => Ok(""),
    }
}

/// Whether a field is a bare number (digits with at most one point), the only text a header unit applies to.
fn is_bare_number(text: &str) -> bool {
    !text.is_empty()
        && text.bytes().any(|b| b.is_ascii_digit())
        && text.bytes().all(|b| b.is_ascii_digit() || b == b'.')
        && text.bytes().filter(|&b| b == b'.').count() <= 1
}

/// Finds the delimiter from the header line: the most frequent of comma, semicolon and tab.
fn detect_delimiter(header: &str) -> u8 {
    let count = |c: char| header.matches(c).count();
    let (comma, semi, tab) = (count(','), count(';'), count('\t'));
    if semi > comma && semi >= tab {
        b';'
    } else if tab > comma && tab > semi {
        b'\t'
    } else {
        b','
    }
}

/// Splits one line into fields. `base` is the line's byte offset in the file. A field that starts (after
/// spaces) with a quote is quoted, with `""` standing for a quote inside it; elsewhere a quote is literal.
fn split_line(line: &str, base: usize, delimiter: u8) -> Result<Vec<Field>, String> {
    let bytes = line.as_bytes();
    let d = delimiter;
    let mut fields = Vec::new();
    let mut i = 0;
    loop {
        let start = i;
        while i < bytes.len() && bytes[i] != d && (bytes[i] == b' ' || bytes[i] == b'\t') {
            i += 1;
        }
        if i < bytes.len() && bytes[i] == b'"' {
            let open = i;
            i += 1;
            let mut text = String::new();
            let content_start = i;
            loop {
                match line[i..].find('"') {
                    None => {
                        return Err(format!(
                            "field {} opens a quote at byte {} that is not closed on this line; a quoted \
                             field may not span lines",
                            fields.len() + 1,
                            open + 1
                        ))
                    }
                    Some(q) => {
                        text.push_str(&line[i..i + q]);
                        i += q + 1;
                        if bytes.get(i) == Some(&b'"') {
                            text.push('"');
                            i += 1;
                        } else {
                            break;
                        }
                    }
                }
            }
            let content = content_start..i - 1;
            while i < bytes.len() && bytes[i] != d && bytes[i].is_ascii_whitespace() {
                i += 1;
            }
            if i < bytes.len() && bytes[i] != d {
                return Err(format!(
                    "field {} has text after its closing quote; expected '{}' or the end of the line",
                    fields.len() + 1,
                    d as char
                ));
            }
            fields.push(trimmed(line, content, base, text));
        } else {
            while i < bytes.len() && bytes[i] != d {
                i += 1;
            }
            let raw = start..i;
            fields.push(trimmed(line, raw.clone(), base, line[raw].to_string()));
        }
        if i >= bytes.len() {
            return Ok(fields);
        }
        i += 1; // the delimiter
    }
}

/// A field whose text is trimmed, with its span narrowed to the trimmed part of `raw`.
fn trimmed(line: &str, raw: Range<usize>, base: usize, text: String) -> Field {
    let s = &line[raw.clone()];
    let lead = s.len() - s.trim_start().len();
    let trail = s.len() - s.trim_end().len();
    let span = if s.trim().is_empty() {
        base + raw.start..base + raw.start
    } else {
        base + raw.start + lead..base + raw.end - trail
    };
    Field {
        text: text.trim().to_string(),
        span,
    }
}

impl Table {
    /// Reads a CSV file's contents; `file` names it in messages.
    pub fn parse(file: &str, bytes: &[u8], schema: &Schema) -> Result<Table, CsvError> {
        let bom = if bytes.starts_with(b"\xEF\xBB\xBF") {
            3
        } else {
            0
        };
        if bytes.starts_with(b"\xFF\xFE") || bytes.starts_with(b"\xFE\xFF") {
            return Err(CsvError::Utf16 {
                file: file.to_string(),
            });
        }
        let text = std::str::from_utf8(&bytes[bom..]).map_err(|e| {
            let (line, byte) = line_of(&bytes[bom..], e.valid_up_to());
            CsvError::NotUtf8 {
                file: file.to_string(),
                line,
                byte,
            }
        })?;
        let row_error = |line: usize, message: String| CsvError::Row {
            file: file.to_string(),
            line,
            message,
        };
        // (1-based line, byte offset in the file, text without its line end, the line end)
        let lines: Vec<(usize, usize, &str, Option<LineEnd>)> = lines(text)
            .enumerate()
            .filter(|(_, (_, content, _))| !is_skipped(content))
            .map(|(i, (at, content, end))| (i + 1, bom + at, content, end))
            .collect();
        let Some(&(header_line, header_at, header_text, header_end)) = lines.first() else {
            return Err(CsvError::NoHeader {
                file: file.to_string(),
                example: schema.example_header,
            });
        };
        let delimiter = detect_delimiter(header_text);
        // The delimiter is no warning: it is read from the header and kept when the file is rewritten; the
        // stock summary names it once, rather than every command that reads the file.
        let warnings = Vec::new();
        let header = Record {
            line: header_line,
            fields: split_line(header_text, header_at, delimiter)
                .map_err(|m| row_error(header_line, format!("the header cannot be read: {m}")))?,
        };
        let mut columns: HashMap<&'static str, usize> = HashMap::new();
        let mut suffixes: Vec<(usize, &'static str)> = Vec::new();
        let mut ignored = Vec::new();
        for (i, field) in header.fields.iter().enumerate() {
            let (name, unit) = header_name(&field.text);
            if let Some(column) = schema
                .columns
                .iter()
                .find(|c| c.aliases.contains(&name.as_str()))
            {
                if columns.insert(column.name, i).is_some() {
                    return Err(CsvError::DuplicateColumn {
                        file: file.to_string(),
                        line: header_line,
                        column: field.text.clone(),
                    });
                }
                if let Some(unit) = unit {
                    match unit_suffix(column.name, &unit) {
                        Ok("") => {}
                        Ok(suffix) => suffixes.push((i, suffix)),
                        Err(expected) => {
                            return Err(CsvError::HeaderUnit {
                                file: file.to_string(),
                                line: header_line,
                                header: field.text.clone(),
                                unit,
                                column: column.name,
                                expected,
                            })
                        }
                    }
                }
            } else if !field.text.is_empty() {
                ignored.push(field.text.clone());
            }
        }
        for column in schema.columns.iter().filter(|c| c.required) {
            if !columns.contains_key(column.name) {
                return Err(CsvError::MissingColumn {
                    file: file.to_string(),
                    line: header_line,
                    column: column.name,
                    found: show_invisible(
                        &header
                            .fields
                            .iter()
                            .map(|f| f.text.as_str())
                            .join(&(delimiter as char).to_string()),
                    )
                    .into_owned(),
                    hidden: hidden_column(column, &header.fields),
                    expected: if header.fields.len() == 1 {
                        // "value|qty" or "value qty": the delimiter is one biasfit does not read.
                        format!(
                            "{}; the header reads as one column, so separate the columns with commas (or semicolons, or tabs)",
                            schema.expected()
                        )
                    } else {
                        schema.expected()
                    },
                });
            }
        }
        let width = header.fields.len();
        let mut records = Vec::with_capacity(lines.len().saturating_sub(1));
        for &(line, at, content, _) in &lines[1..] {
            if is_bare_delimiters(content, delimiter) {
                continue;
            }
            let mut fields = split_line(content, at, delimiter)
                .map_err(|m| row_error(line, format!("the row cannot be read: {m}")))?;
            // A bare number under `Power [mW]` is read as mW: the text says its unit, the span stays on
            // the file's bytes.
            for &(i, suffix) in &suffixes {
                if let Some(f) = fields.get_mut(i) {
                    if is_bare_number(&f.text) {
                        f.text.push_str(suffix);
                    }
                }
            }
            if fields.len() > width {
                return Err(row_error(
                    line,
                    format!(
                        "the row has {} fields but the header has {width}; quote any field that contains '{}'",
                        fields.len(),
                        delimiter as char
                    ),
                ));
            }
            records.push(Record { line, fields });
        }
        Ok(Table {
            file: file.to_string(),
            header,
            records,
            layout: Layout {
                delimiter,
                // A header with no line end (a one-line file) gets LF, the common case.
                line_end: header_end.unwrap_or(LineEnd::Lf),
                ends_with_newline: text.is_empty() || text.ends_with(['\n', '\r']),
                width,
                columns,
            },
            warnings,
            ignored,
        })
    }

    /// Whether the header has a column.
    pub fn has(&self, column: &str) -> bool {
        self.layout.columns.contains_key(column)
    }

    /// A record's field for a column, if the header has the column and the row reaches it.
    pub fn field<'r>(&self, record: &'r Record, column: &str) -> Option<&'r Field> {
        self.layout
            .columns
            .get(column)
            .and_then(|&i| record.fields.get(i))
    }

    /// A record's text for a column; empty when the column or the field is absent.
    pub fn get<'r>(&self, record: &'r Record, column: &str) -> &'r str {
        self.field(record, column).map_or("", |f| f.text.as_str())
    }

    /// An error about one field of a record.
    pub fn field_error(&self, record: &Record, column: &'static str, message: String) -> CsvError {
        CsvError::Field {
            file: self.file.clone(),
            line: record.line,
            column,
            message,
        }
    }

    /// An error about a whole record.
    pub fn row_error(&self, record: &Record, message: String) -> CsvError {
        CsvError::Row {
            file: self.file.clone(),
            line: record.line,
            message,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    const SCHEMA: Schema = Schema {
        kind: "test file",
        columns: &[
            Column {
                name: "value",
                aliases: &["value", "ohms"],
                required: true,
            },
            Column {
                name: "qty",
                aliases: &["qty"],
                required: true,
            },
            Column {
                name: "note",
                aliases: &["note"],
                required: false,
            },
        ],
        example_header: "value,qty,note",
    };

    fn table(s: &str) -> Result<Table, CsvError> {
        Table::parse("t.csv", s.as_bytes(), &SCHEMA)
    }

    #[test]
    fn spans_point_at_the_text_in_the_file() {
        let text =
            "\u{feff}# c\r\nValue; QTY ;note;extra\r\n\r\n 4k7 ;\" 12 \";\"a;\"\"b\"\"\";x\r\n";
        let t = table(text).unwrap();
        assert_eq!(t.layout.delimiter, b';');
        assert_eq!(t.layout.line_end, LineEnd::CrLf);
        assert!(t.layout.ends_with_newline);
        assert_eq!(t.layout.width, 4);
        let r = &t.records[0];
        assert_eq!(r.line, 4);
        assert_eq!(t.get(r, "value"), "4k7");
        assert_eq!(t.get(r, "qty"), "12");
        assert_eq!(t.get(r, "note"), "a;\"b\"");
        let qty = t.field(r, "qty").unwrap();
        assert_eq!(&text.as_bytes()[qty.span.clone()], b"12");
        let value = t.field(r, "value").unwrap();
        assert_eq!(&text.as_bytes()[value.span.clone()], b"4k7");
    }

    #[test]
    fn cr_lf_and_crlf_end_lines_alike() {
        let lf = "# c\nvalue,qty\n\n4k7,\"12\"\n# x\n1k,3\n";
        for end in ["\n", "\r\n", "\r"] {
            let text = lf.replace('\n', end);
            let t = table(&text).unwrap();
            assert_eq!(t.header.line, 2, "{end:?}");
            let lines: Vec<usize> = t.records.iter().map(|r| r.line).collect();
            assert_eq!(lines, [4, 6], "{end:?}");
            let qty = t.field(&t.records[0], "qty").unwrap();
            assert_eq!(&text.as_bytes()[qty.span.clone()], b"12", "{end:?}");
            assert_eq!(t.layout.line_end.as_str(), end);
            assert!(t.layout.ends_with_newline);
            assert_eq!(line_ends(text.as_bytes()), 6, "{end:?}");
        }
        // Mixed ends in one file still count one line each.
        let t = table("value,qty\r1k,1\n2k,2\r\n3k,x\r").unwrap();
        assert_eq!(
            t.records.iter().map(|r| r.line).collect::<Vec<_>>(),
            [2, 3, 4]
        );
        let err = Table::parse("t.csv", b"value,qty\r1k,1\r\xff\r", &SCHEMA).unwrap_err();
        assert_eq!(
            err.to_string(),
            "t.csv:3: the file is not UTF-8 text (byte 1); save it as UTF-8 CSV"
        );
    }

    #[test]
    fn short_rows_read_as_blank_fields() {
        let t = table("value,qty,note\n1k,2\n").unwrap();
        assert_eq!(t.get(&t.records[0], "note"), "");
        assert!(t.field(&t.records[0], "note").is_none());
        assert!(t.layout.ends_with_newline);
        let t = table("value,qty\n1k,2").unwrap();
        assert!(!t.layout.ends_with_newline);
        assert_eq!(t.get(&t.records[0], "qty"), "2");
    }

    #[test]
    fn broken_quoting_is_refused_with_its_line() {
        let err = table("value,qty\n\"1k,2\n").unwrap_err().to_string();
        assert!(
            err.starts_with("t.csv:2: the row cannot be read: field 1 opens a quote"),
            "{err}"
        );
        assert!(err.contains("may not span lines"), "{err}");
        let err = table("value,qty\n\"1k\"x,2\n").unwrap_err().to_string();
        assert!(err.contains("text after its closing quote"), "{err}");
    }

    #[test]
    fn header_problems() {
        let err = table("value,count\n").unwrap_err().to_string();
        assert_eq!(
            err,
            "t.csv:1: no 'qty' column in the header (value,count); expected columns value and qty, optionally note"
        );
        let err = table("ohms,qty,Value\n").unwrap_err().to_string();
        assert!(err.contains("names column 'Value' twice"), "{err}");
        let err = table("\n# nothing\n\n").unwrap_err().to_string();
        assert_eq!(
            err,
            "t.csv: the file has no header row; expected a first line such as value,qty,note"
        );
    }

    #[test]
    fn appended_rows_follow_the_layout() {
        let t = table("note\tqty\tvalue\tbin\r\n").unwrap();
        let row = t
            .layout
            .row(&[("value", "4k7"), ("qty", "3"), ("note", "a\tb")]);
        assert_eq!(row, "\"a\tb\"\t3\t4k7\t\r\n");
    }

    proptest! {
        #[test]
        fn quoted_fields_read_back(cells in proptest::collection::vec("[ -~]{0,8}", 1..5), delim in prop_oneof![Just(b','), Just(b';')]) {
            // Whatever `quote` writes, the reader gives back trimmed.
            let line = cells.iter().map(|c| quote(c, delim)).join(&(delim as char).to_string());
            let fields = split_line(&line, 0, delim).unwrap();
            prop_assert_eq!(fields.len(), cells.len());
            for (f, c) in fields.iter().zip(&cells) {
                prop_assert_eq!(&f.text, c.trim());
            }
        }

        #[test]
        fn never_panics(s in "\\PC{0,40}") {
            let _ = table(&s);
        }
    }
}
