//! Where reports go: stdout for people or programs, warnings to stderr, colour only on a terminal, and a
//! closed pipe (`biasfit … | head`) treated as the reader having had enough rather than as an error.

use super::Failure;
use biasfit::notation::text::{json_printable, printable};
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

    /// Writes text, with control characters from files shown as escapes (colour kept on a terminal).
    pub fn text(&mut self, s: &str) -> Result<(), Failure> {
        let s = printable(s, self.colour);
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
        self.text(&json_printable(&s))?;
        self.text("\n")
    }
}

/// Writes a file atomically: a temporary file in the same folder, then a rename over the target, so a reader
/// never sees it half-written.
pub fn write_atomic(path: &std::path::Path, bytes: &[u8]) -> Result<(), Failure> {
    biasfit::save::Saver::new()
        .write(path, bytes)
        .map_err(|e| Failure::Io(e.to_string()))
}

/// Prints warnings to stderr, each once, prefixed so they stand out from the report.
pub fn warn_all(warnings: &[String]) {
    for w in warnings {
        eprintln!("warning: {}", one_line(w));
    }
}

/// Prints a note for the user on stderr (a file written), safe to show.
pub fn note(text: &str) {
    eprintln!("{}", one_line(text));
}

/// A message as one line safe for a terminal: its lines joined, control characters shown as escapes.
pub fn one_line(message: &str) -> String {
    let m: Vec<&str> = message
        .lines()
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .collect();
    printable(&m.join(" "), false).into_owned()
}

/// A progress line on stderr for work that may take more than a second: silent for the first second, then a
/// spinner with the current phase, redrawn in place; only on a terminal, and erased when dropped.
pub struct Progress {
    phase: std::sync::Arc<std::sync::Mutex<String>>,
    done: std::sync::Arc<std::sync::atomic::AtomicBool>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Progress {
    /// Starts the indicator (a no-op when stderr is not a terminal); with a time limit (the command's start
    /// and its limit), the line shows the time used against it.
    pub fn start(
        first: &str,
        limit: Option<(std::time::Instant, std::time::Duration)>,
    ) -> Progress {
        use std::sync::atomic::{AtomicBool, Ordering};
        use std::sync::{Arc, Mutex};
        let phase = Arc::new(Mutex::new(first.to_string()));
        let done = Arc::new(AtomicBool::new(false));
        let thread = std::io::stderr().is_terminal().then(|| {
            let (phase, done) = (phase.clone(), done.clone());
            std::thread::spawn(move || {
                let started = std::time::Instant::now();
                let frames = ['|', '/', '-', '\\'];
                let mut shown = false;
                let mut i = 0;
                while !done.load(Ordering::Relaxed) {
                    std::thread::sleep(std::time::Duration::from_millis(100));
                    if started.elapsed().as_secs_f64() < 1.0 || done.load(Ordering::Relaxed) {
                        continue;
                    }
                    let text = phase.lock().map(|p| one_line(&p)).unwrap_or_default();
                    let clock = match limit {
                        Some((from, l)) => format!(
                            "{:.0} s of {:.0} s",
                            from.elapsed().as_secs_f64(),
                            l.as_secs_f64().max(1.0)
                        ),
                        None => format!("{:.0} s", started.elapsed().as_secs_f64()),
                    };
                    eprint!("\r\x1b[2K{} {text} ({clock})", frames[i % 4]);
                    shown = true;
                    i += 1;
                }
                if shown {
                    eprint!("\r\x1b[2K");
                }
            })
        });
        Progress {
            phase,
            done,
            thread,
        }
    }

    /// Says what is being done now.
    pub fn phase(&self, text: &str) {
        if let Ok(mut p) = self.phase.lock() {
            *p = text.to_string();
        }
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        self.done.store(true, std::sync::atomic::Ordering::Relaxed);
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

/// Runs `read` (reading a command's input files) on a thread of its own and waits for it until `deadline`.
/// Reading a huge stock cannot be cut short from inside, so past the deadline the command stops waiting and
/// fails with a time-out (exit 5); the process then ends, and the reading with it. `what` names the files
/// in the message.
pub fn read_within<T: Send + 'static>(
    deadline: std::time::Instant,
    what: &str,
    read: impl FnOnce() -> Result<T, Failure> + Send + 'static,
) -> Result<T, Failure> {
    let late = || {
        Failure::TimedOut(format!(
            "{what}: the time limit passed while reading them, before any search began; raise --time-limit (seconds; the default is 60)"
        ))
    };
    if std::time::Instant::now() >= deadline {
        return Err(late());
    }
    let (send, receive) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        // The command may have stopped waiting already; nobody is left to tell.
        let _ = send.send(read());
    });
    let wait = deadline.saturating_duration_since(std::time::Instant::now());
    match receive.recv_timeout(wait) {
        Ok(result) => result,
        Err(_) => Err(late()),
    }
}
