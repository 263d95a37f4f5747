//! Where reports go: stdout for people or programs, warnings to stderr, colour only on a terminal, and a
//! closed pipe (`biasfit … | head`) treated as the reader having had enough rather than as an error.

use super::Failure;
use std::io::{IsTerminal, Write};

/// The command's standard output.
pub struct Out {
    sink: Box<dyn Write>,
    colour: bool,
    closed: bool,
}

impl Out {
    /// Standard output, with colour when it is a terminal and NO_COLOR is unset.
    pub fn stdout() -> Out {
        let tty = std::io::stdout().is_terminal();
        Out {
            sink: Box::new(std::io::stdout().lock()),
            colour: tty && std::env::var_os("NO_COLOR").is_none(),
            closed: false,
        }
    }

    /// Whether the reader closed the pipe.
    pub fn pipe_closed(&self) -> bool {
        self.closed
    }

    /// Whether to colour the output.
    pub fn colour(&self) -> bool {
        self.colour
    }

    /// Writes text as it is.
    pub fn text(&mut self, s: &str) -> Result<(), Failure> {
        let r = self
            .sink
            .write_all(s.as_bytes())
            .and_then(|_| self.sink.flush());
        r.map_err(|e| {
            if e.kind() == std::io::ErrorKind::BrokenPipe {
                self.closed = true;
            }
            Failure::Io(format!("cannot write to standard output: {e}"))
        })
    }

    /// Writes a value as pretty JSON, one object, with a final newline.
    pub fn json<T: serde::Serialize>(&mut self, value: &T) -> Result<(), Failure> {
        let s = serde_json::to_string_pretty(value)
            .map_err(|e| Failure::Io(format!("cannot write JSON: {e}")))?;
        self.text(&s)?;
        self.text("\n")
    }
}

/// Prints warnings to stderr, each once, prefixed so they stand out from the report.
pub fn warn_all(warnings: &[String]) {
    for w in warnings {
        eprintln!("warning: {w}");
    }
}
