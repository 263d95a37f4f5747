//! Reading an input file within bounds: only a regular file is read (a FIFO with no writer, a device such
//! as /dev/zero or a folder is refused before any read), no file over [`MAX_FILE_BYTES`], and no line over
//! [`MAX_LINE_BYTES`], each far above any real stock, catalogue or design file. Every file biasfit reads
//! comes through [`read`].

use std::io::Read;
use std::path::Path;

/// The largest input file read (100 MB): a stock of a million rows is about 40 MB.
pub const MAX_FILE_BYTES: u64 = 100 * 1024 * 1024;
/// The longest line read (64 KiB): a stock row or a design-file line is well under 200 bytes.
pub const MAX_LINE_BYTES: usize = 64 * 1024;

/// Why an input file was not read.
#[derive(Debug, thiserror::Error)]
pub enum InputError {
    /// The system refused the read.
    #[error("{file}: cannot read the {kind}: {source}")]
    Io {
        /// The file.
        file: String,
        /// What the file is ("stock file").
        kind: &'static str,
        /// The system's reason.
        source: std::io::Error,
    },
    /// The path names something other than a regular file.
    #[error("{file}: cannot read the {kind}: it is {what}, not a regular file; expected a file saved on disk")]
    NotAFile {
        /// The file.
        file: String,
        /// What the file is.
        kind: &'static str,
        /// What it is instead ("a FIFO").
        what: &'static str,
    },
    /// The file is larger than any real one.
    #[error("{file}: the {kind} is {bytes} bytes, more than the {MAX_FILE_BYTES} biasfit reads; expected a far smaller file (check that it is the right one)")]
    TooBig {
        /// The file.
        file: String,
        /// What the file is.
        kind: &'static str,
        /// Its size, or as much as was read.
        bytes: u64,
    },
    /// A line is longer than any real one.
    #[error("{file}:{line}: the line is {bytes} bytes long, more than the {MAX_LINE_BYTES} biasfit reads in a line; expected short lines (check that it is the right file)")]
    LongLine {
        /// The file.
        file: String,
        /// 1-based line.
        line: usize,
        /// Its length.
        bytes: usize,
    },
}

/// What a non-regular file is, for messages.
fn kind_of(t: std::fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a FIFO (named pipe)";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    if t.is_dir() {
        "a folder"
    } else {
        "not a regular file"
    }
}

/// Reads a whole input file within the bounds; `kind` names it in messages ("stock file").
pub fn read(path: &Path, kind: &'static str) -> Result<Vec<u8>, InputError> {
    let file = path.display().to_string();
    let io = |source| InputError::Io {
        file: file.clone(),
        kind,
        source,
    };
    // The type is checked before opening: opening a FIFO with no writer would wait for ever.
    let meta = std::fs::metadata(path).map_err(io)?;
    if !meta.is_file() {
        return Err(InputError::NotAFile {
            file,
            kind,
            what: kind_of(meta.file_type()),
        });
    }
    if meta.len() > MAX_FILE_BYTES {
        return Err(InputError::TooBig {
            file,
            kind,
            bytes: meta.len(),
        });
    }
    let f = std::fs::File::open(path).map_err(io)?;
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    // One byte past the bound, so that a file grown since the check is caught too.
    f.take(MAX_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(io)?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err(InputError::TooBig {
            file,
            kind,
            bytes: bytes.len() as u64,
        });
    }
    check_lines(&file, &bytes)?;
    Ok(bytes)
}

/// Refuses a line longer than [`MAX_LINE_BYTES`] (LF, CR and CRLF all end lines).
pub fn check_lines(file: &str, bytes: &[u8]) -> Result<(), InputError> {
    let mut line = 1;
    let mut start = 0;
    let mut i = 0;
    while i <= bytes.len() {
        let end = i == bytes.len() || bytes[i] == b'\n' || bytes[i] == b'\r';
        if end {
            if i - start > MAX_LINE_BYTES {
                return Err(InputError::LongLine {
                    file: file.to_string(),
                    line,
                    bytes: i - start,
                });
            }
            if i + 1 < bytes.len() && bytes[i] == b'\r' && bytes[i + 1] == b'\n' {
                i += 1;
            }
            line += 1;
            start = i + 1;
        }
        i += 1;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_lines_are_refused_at_their_line() {
        let ok = "a\r\n".repeat(10) + &"x".repeat(MAX_LINE_BYTES);
        assert!(check_lines("f", ok.as_bytes()).is_ok());
        let bad = "a\rb\r\nc\n".to_string() + &"x".repeat(MAX_LINE_BYTES + 1) + "\n";
        let err = check_lines("f", bad.as_bytes()).unwrap_err().to_string();
        assert!(
            err.starts_with("f:4: the line is 65537 bytes long"),
            "{err}"
        );
    }

    #[cfg(unix)]
    #[test]
    fn devices_and_folders_are_refused_before_reading() {
        let err = read(Path::new("/dev/zero"), "stock file")
            .unwrap_err()
            .to_string();
        assert_eq!(
            err,
            "/dev/zero: cannot read the stock file: it is a device, not a regular file; expected a file saved on disk"
        );
        let err = read(Path::new("/"), "stock file").unwrap_err().to_string();
        assert!(err.contains("it is a folder"), "{err}");
    }
}
