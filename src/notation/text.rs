//! Text from files made safe to show: control characters escaped so that a stage name or a bin location
//! cannot move the cursor, retitle the terminal or reorder what a reader sees, and long offending texts cut
//! to a short excerpt so that a refusal stays one readable line.
//!
//! Every text output goes through [`printable`] (the binary applies it to stdout, warnings and errors), and
//! every message that quotes what the user wrote uses [`excerpt`]. HTML and SVG escape on their own.

use std::borrow::Cow;
use std::fmt::Write as _;

/// The most characters of an offending text a message quotes.
pub const EXCERPT_CHARS: usize = 60;

/// Whether a character must not reach a terminal as it is: C0 and C1 controls and DEL (escape sequences,
/// bell, carriage return, backspace), and the bidirectional embedding, override and isolate marks that can
/// make text read in another order than it is stored. A line feed is kept by [`printable`] itself.
fn unsafe_char(c: char) -> bool {
    c.is_control() || matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
}

/// Characters that show as nothing (a byte-order mark left in the middle of a file by joining two files, a
/// zero-width space from a copied web page), with the name a message gives each.
const INVISIBLE: [(char, &str); 6] = [
    ('\u{feff}', "a byte-order mark (U+FEFF)"),
    ('\u{200b}', "a zero-width space (U+200B)"),
    ('\u{200c}', "a zero-width non-joiner (U+200C)"),
    ('\u{200d}', "a zero-width joiner (U+200D)"),
    ('\u{2060}', "a word joiner (U+2060)"),
    ('\u{ad}', "a soft hyphen (U+00AD)"),
];

/// The name of an invisible character (a byte-order mark, a zero-width space), if `c` is one.
pub fn invisible_name(c: char) -> Option<&'static str> {
    INVISIBLE.iter().find(|(i, _)| *i == c).map(|&(_, n)| n)
}

/// `text` with its invisible characters written as visible escapes (`\u{feff}`), for quoting it in a message.
pub fn show_invisible(text: &str) -> Cow<'_, str> {
    if !text.chars().any(|c| invisible_name(c).is_some()) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    for c in text.chars() {
        if invisible_name(c).is_some() {
            escape_into(&mut out, c);
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// Writes a character as a visible escape (`\u{1b}`), the form Rust and many tools use.
fn escape_into(out: &mut String, c: char) {
    let _ = write!(out, "\\u{{{:x}}}", c as u32);
}

/// `text` with every control character except the line feed written as a visible escape (`\u{1b}`).
///
/// With `keep_colour`, a colour sequence (ESC `[` digits and semicolons `m`, which only sets colours) is kept,
/// because the renderers add them on a terminal; every other escape sequence is shown, not obeyed.
pub fn printable(text: &str, keep_colour: bool) -> Cow<'_, str> {
    if !text.chars().any(|c| c != '\n' && unsafe_char(c)) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    let mut rest = text;
    while let Some(c) = rest.chars().next() {
        if c == '\u{1b}' && keep_colour {
            if let Some(len) = colour_sequence(rest) {
                out.push_str(&rest[..len]);
                rest = &rest[len..];
                continue;
            }
        }
        if c != '\n' && unsafe_char(c) {
            escape_into(&mut out, c);
        } else {
            out.push(c);
        }
        rest = &rest[c.len_utf8()..];
    }
    Cow::Owned(out)
}

/// The length of the colour sequence `text` starts with (ESC `[` digits/semicolons `m`), if it does.
fn colour_sequence(text: &str) -> Option<usize> {
    let body = text.strip_prefix("\u{1b}[")?;
    let n = body
        .bytes()
        .take_while(|b| b.is_ascii_digit() || *b == b';')
        .count();
    (n <= 16 && body.as_bytes().get(n) == Some(&b'm')).then_some(2 + n + 1)
}

/// JSON text with the characters serde leaves raw (DEL, C1 controls, bidirectional marks) written as
/// `\uXXXX` escapes. They can only stand inside strings, where the escape means the same character, so a
/// program reads the same value and a terminal shows no control.
pub fn json_printable(json: &str) -> Cow<'_, str> {
    if !json.chars().any(unsafe_char) {
        return Cow::Borrowed(json);
    }
    let mut out = String::with_capacity(json.len() + 16);
    for c in json.chars() {
        // serde_json already escapes C0 controls; a raw line feed here is its own pretty-printing.
        if unsafe_char(c) && c != '\n' {
            let _ = write!(out, "\\u{:04x}", c as u32);
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// An offending text as a message quotes it: [`printable`], and cut after [`EXCERPT_CHARS`] characters
/// with the full length said, so that a 50 MB line does not come back whole.
pub fn excerpt(text: &str) -> String {
    let count = text.chars().count();
    let shown: String = if count > EXCERPT_CHARS {
        let head: String = text.chars().take(EXCERPT_CHARS).collect();
        format!("{}… ({count} characters in all)", printable(&head, false))
    } else {
        printable(text, false).into_owned()
    };
    // A line feed inside a quoted text would break the one-line message.
    shown.replace('\n', "\\u{a}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn controls_are_shown_not_obeyed() {
        let title = "bin \u{1b}]0;owned\u{7} A";
        assert_eq!(printable(title, false), "bin \\u{1b}]0;owned\\u{7} A");
        assert_eq!(printable(title, true), "bin \\u{1b}]0;owned\\u{7} A");
        assert_eq!(
            printable("a\r\tb\u{7f}\u{9b}", false),
            "a\\u{d}\\u{9}b\\u{7f}\\u{9b}"
        );
        assert_eq!(printable("abc\u{202e}fed", false), "abc\\u{202e}fed");
        assert_eq!(printable("two\nlines", false), "two\nlines");
        assert!(matches!(printable("plain 4k7 Ω", false), Cow::Borrowed(_)));
    }

    #[test]
    fn colour_is_kept_only_when_asked() {
        let red = "\u{1b}[1;31mFAIL\u{1b}[0m";
        assert_eq!(printable(red, true), red);
        assert_eq!(printable(red, false), "\\u{1b}[1;31mFAIL\\u{1b}[0m");
        // A cursor move looks like a colour up to its last letter.
        assert_eq!(printable("\u{1b}[2J", true), "\\u{1b}[2J");
    }

    #[test]
    fn json_escapes_read_back_as_the_same_text() {
        let value = serde_json::json!({ "location": "a\u{9b}b\u{202e}c\u{7f}", "n": 1 });
        let raw = serde_json::to_string_pretty(&value).unwrap();
        let safe = json_printable(&raw);
        assert!(!safe.chars().any(|c| c != '\n' && unsafe_char(c)), "{safe}");
        let back: serde_json::Value = serde_json::from_str(&safe).unwrap();
        assert_eq!(back, value);
    }

    #[test]
    fn excerpts_are_short_and_say_the_length() {
        let long = "4k7+".repeat(25_000);
        let e = excerpt(&long);
        assert!(e.chars().count() < 100, "{e}");
        assert!(e.ends_with("… (100000 characters in all)"), "{e}");
        assert!(e.starts_with("4k7+4k7+"));
        assert_eq!(excerpt("10k"), "10k");
        assert_eq!(excerpt("a\nb\u{1b}"), "a\\u{a}b\\u{1b}");
    }
}
