//! Where reports go: stdout for people or programs, warnings to stderr, colour only on a terminal, and a
//! closed pipe (`biasfit … | head`) treated as the reader having had enough rather than as an error.

use super::Failure;
use biasfit::notation::text::{json_printable, printable};
use biasfit::save::{self, FileId};
use std::io::{IsTerminal, Read, Write};
use std::path::Path;

/// The command's standard output.
pub struct Out {
    sink: Box<dyn Write>,
    colour: bool,
    closed: bool,
    /// A file went to standard output (`--csv -`): it holds that file alone, so the report is not added.
    taken: bool,
}

impl Out {
    /// Standard output, with colour when it is a terminal and NO_COLOR is unset.
    pub fn stdout() -> Out {
        let tty = std::io::stdout().is_terminal();
        Out {
            sink: Box::new(std::io::stdout().lock()),
            colour: tty && std::env::var_os("NO_COLOR").is_none(),
            closed: false,
            taken: false,
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
        if self.taken {
            return Ok(());
        }
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

    /// Writes a file's bytes as they are (an output given as `-`): they are the file, not a report, and
    /// their own renderer already made any text from files safe. Standard output then holds that file
    /// alone: the report that would follow is left out, and a second such file is refused.
    pub fn bytes(&mut self, b: &[u8]) -> Result<(), Failure> {
        if self.taken {
            return Err(Failure::Input(
                "two outputs were sent to standard output (-); expected at most one, so that it holds one file"
                    .into(),
            ));
        }
        self.taken = true;
        let r = self.sink.write_all(b).and_then(|_| self.sink.flush());
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

/// What an output file holds, so that a file biasfit wrote before is recognised and replaced without a
/// question.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// An order list (`order --csv`): its first line is biasfit's order header.
    OrderCsv,
    /// A build sheet (`--html`): it carries `<meta name="generator" content="biasfit">`.
    Html,
    /// A drawing (`--svg`): it starts with [`SVG_MARK`].
    Svg,
}

/// The first line of every SVG file biasfit writes (an XML comment, which SVG readers skip).
pub const SVG_MARK: &str = "<!-- written by biasfit -->";

impl Kind {
    /// Whether the start of an existing file shows that biasfit wrote it.
    fn written_by_biasfit(self, head: &[u8]) -> bool {
        let head = String::from_utf8_lossy(head);
        match self {
            Kind::OrderCsv => {
                head.lines().next().map(|l| l.trim_end_matches('\r'))
                    == Some(biasfit::order::orderfile::HEADER)
            }
            Kind::Html => head.contains(biasfit::report::html::GENERATOR),
            Kind::Svg => head.starts_with(SVG_MARK),
        }
    }
}

/// The files a command reads, so that none of its outputs lands on one (by file identity, so a link or
/// another spelling of the name is caught too), and whether an existing file biasfit did not write may be
/// replaced (`--force`).
pub struct Outputs {
    inputs: Vec<(String, &'static str, FileId)>,
    force: bool,
}

/// How much of an existing file is read to recognise it.
const HEAD_BYTES: u64 = 4096;

impl Outputs {
    /// The command's inputs, each with what it is ("design file"); `force` allows replacing other files.
    pub fn new(inputs: &[(&'static str, &Path)], force: bool) -> Outputs {
        let inputs = inputs
            .iter()
            .filter_map(|(what, p)| FileId::of(p).map(|id| (p.display().to_string(), *what, id)))
            .collect();
        Outputs { inputs, force }
    }

    /// Refuses an output path that is one of the inputs, or an existing file biasfit did not write (unless
    /// `--force`); `flag` names the option in the message. Called before the work, and again at the write.
    pub fn check(&self, flag: &str, path: &Path, kind: Kind) -> Result<(), Failure> {
        self.not_an_input(flag, path)?;
        if to_stdout(path) || save::is_direct(path) {
            return Ok(());
        }
        let Ok(meta) = std::fs::metadata(path) else {
            return Ok(());
        };
        if meta.is_file() && meta.permissions().readonly() {
            // Refused at the write too; said here so that no search runs for an output that cannot land.
            let e = save::SaveError::ReadOnly {
                file: path.display().to_string(),
                why: "",
            };
            return Err(Failure::Io(e.to_string()));
        }
        if self.force {
            return Ok(());
        }
        if !meta.is_file() || meta.len() == 0 {
            return Ok(());
        }
        let mut head = Vec::new();
        let read =
            std::fs::File::open(path).and_then(|f| f.take(HEAD_BYTES).read_to_end(&mut head));
        if read.is_ok() && kind.written_by_biasfit(&head) {
            return Ok(());
        }
        Err(Failure::Input(format!(
            "{flag} {}: the file exists and biasfit did not write it; nothing was written; give another file name, or add --force to replace it",
            path.display()
        )))
    }

    /// Refuses an output path that names one of the inputs.
    pub fn not_an_input(&self, flag: &str, path: &Path) -> Result<(), Failure> {
        if to_stdout(path) {
            return Ok(());
        }
        let shown = path.display();
        if let Some(id) = FileId::of(path) {
            if let Some((name, what, _)) = self.inputs.iter().find(|(_, _, i)| *i == id) {
                let same = if *name == shown.to_string() {
                    String::new()
                } else {
                    format!(" ({name})")
                };
                return Err(Failure::Input(format!(
                    "{flag} {shown}: that is the {what}{same} this command reads, and writing there would destroy it; nothing was written; give another file name"
                )));
            }
        }
        Ok(())
    }

    /// Checks the output again and writes it: `-` (or /dev/stdout) to standard output, a device or a FIFO
    /// directly, a regular file atomically (see [`biasfit::save`]). Prints what the user should know about
    /// the new file, and that it was written.
    pub fn write(
        &self,
        flag: &str,
        path: &Path,
        kind: Kind,
        bytes: &[u8],
        out: &mut Out,
    ) -> Result<(), Failure> {
        self.check(flag, path, kind)?;
        let marked;
        let bytes = if kind == Kind::Svg {
            marked = [SVG_MARK.as_bytes(), b"\n", bytes].concat();
            &marked[..]
        } else {
            bytes
        };
        if to_stdout(path) {
            return out.bytes(bytes);
        }
        let written = biasfit::save::Saver::new()
            .write(path, bytes)
            .map_err(|e| Failure::Io(e.to_string()))?;
        warn_all(&written.notes);
        note(&format!("wrote {}", path.display()));
        Ok(())
    }
}

/// Whether an output path means standard output: `-`, or /dev/stdout, which is written through the
/// process's own handle (opening /dev/stdout anew would start at the beginning of a redirected file).
pub fn to_stdout(path: &Path) -> bool {
    path == Path::new("-") || path == Path::new("/dev/stdout")
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
