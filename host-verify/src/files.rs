//! The two file rules every command of the tool follows, in one place:
//!
//! * **Bounded reads** ([`read_bounded`], [`read_text`]): only regular files
//!   (a FIFO, a device such as `/dev/zero`, a folder or a socket is refused
//!   before it is opened; a symbolic link counts as what it points to), and
//!   only up to a stated size, checked before reading and again while
//!   reading.
//! * **Safe outputs** ([`Outputs`]): the output names are plain file names
//!   inside the output folder; a file that exists is refused unless the
//!   command was given its overwrite flag, naming the file, before any
//!   output is written; every output is first written to a temporary file
//!   in the output folder and renamed into place only when all of them were
//!   written; if a rename fails the files already replaced are put back.
//!   Nothing is ever deleted but the tool's own temporary files and, on
//!   success, the previous versions of files the caller asked to replace.
//!
//! Every error names the path it is about, and shows names with their
//! invisible characters escaped ([`shown`]).

use std::fs;
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use thiserror::Error;

/// Largest manifest, lens file or other text input the tool reads.
pub const MAX_TEXT_BYTES: u64 = 16 << 20;
/// Largest golden image file the tool reads.
pub const MAX_IMAGE_BYTES: u64 = 64 << 20;

/// What can go wrong reading an input or writing the outputs.
#[derive(Debug, Error)]
pub enum FileError {
    /// The operating system refused.
    #[error("cannot {action} {}: {source}", shown_path(path))]
    Io {
        /// What was being done (`read`, `create`, ...).
        action: &'static str,
        /// The file or folder.
        path: PathBuf,
        /// The OS error.
        source: std::io::Error,
    },
    /// The path is not a regular file.
    #[error(
        "{} is {kind}, not a regular file; the tool reads only regular files",
        shown_path(path)
    )]
    NotRegular {
        /// The path.
        path: PathBuf,
        /// What it is.
        kind: &'static str,
    },
    /// The file is larger than the tool reads.
    #[error(
        "{} holds {size} bytes, more than the {cap} bytes the tool reads from such a file",
        shown_path(path)
    )]
    TooLarge {
        /// The file.
        path: PathBuf,
        /// Its size (or the bytes read before stopping).
        size: u64,
        /// The cap.
        cap: u64,
    },
    /// A text file is not UTF-8.
    #[error(
        "{} is not UTF-8 text (invalid byte at offset {offset})",
        shown_path(path)
    )]
    NotText {
        /// The file.
        path: PathBuf,
        /// Offset of the first invalid byte.
        offset: usize,
    },
    /// An output exists and the overwrite flag was not given.
    #[error("{} already exists; pass {flag} to replace it", shown_path(path))]
    Exists {
        /// The file.
        path: PathBuf,
        /// The command's overwrite flag.
        flag: &'static str,
    },
    /// An output name is not a plain file name.
    #[error(
        "output name {} {reason}; give a plain file name (the folder is chosen with --out)",
        shown(name)
    )]
    BadName {
        /// The name.
        name: String,
        /// What is wrong.
        reason: &'static str,
    },
}

/// `s` in backquotes with every invisible or non-ASCII-space character
/// escaped (`\u{feff}` for a byte-order mark, `\t`, `\u{0}`, ...), so that
/// what a message shows is what the file holds.
///
/// ```
/// assert_eq!(fixsight_verify::files::shown("\u{feff}format"), "`\\u{feff}format`");
/// assert_eq!(fixsight_verify::files::shown("a b"), "`a b`");
/// ```
pub fn shown(s: &str) -> String {
    let mut o = String::from("`");
    for c in s.chars() {
        if c == ' ' || (c.is_ascii_graphic() && c != '`') || (c.is_alphanumeric() && !c.is_ascii())
        {
            o.push(c);
        } else {
            o.extend(c.escape_default());
        }
    }
    o.push('`');
    o
}

/// A path for a message: its lossy text through [`shown`].
pub fn shown_path(p: &Path) -> String {
    shown(&p.to_string_lossy())
}

fn io<'a>(action: &'static str, path: &'a Path) -> impl FnOnce(std::io::Error) -> FileError + 'a {
    move |source| FileError::Io {
        action,
        path: path.to_path_buf(),
        source,
    }
}

fn kind_of(ft: &fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if ft.is_fifo() {
            return "a FIFO";
        }
        if ft.is_char_device() || ft.is_block_device() {
            return "a device";
        }
        if ft.is_socket() {
            return "a socket";
        }
    }
    if ft.is_dir() {
        "a folder"
    } else {
        "not a regular file"
    }
}

/// Reads a regular file of at most `cap` bytes (rules in the module docs).
///
/// ```
/// use fixsight_verify::files::{read_bounded, FileError};
/// let p = std::env::temp_dir().join(format!("fsv-doc-read-{}", std::process::id()));
/// std::fs::write(&p, b"12345").unwrap();
/// assert_eq!(read_bounded(&p, 5).unwrap(), b"12345");
/// assert!(matches!(read_bounded(&p, 4), Err(FileError::TooLarge { .. })));
/// assert!(matches!(read_bounded(&std::env::temp_dir(), 4), Err(FileError::NotRegular { .. })));
/// # std::fs::remove_file(&p).unwrap();
/// ```
pub fn read_bounded(path: &Path, cap: u64) -> Result<Vec<u8>, FileError> {
    let meta = fs::metadata(path).map_err(io("read", path))?;
    if !meta.is_file() {
        return Err(FileError::NotRegular {
            path: path.into(),
            kind: kind_of(&meta.file_type()),
        });
    }
    if meta.len() > cap {
        return Err(FileError::TooLarge {
            path: path.into(),
            size: meta.len(),
            cap,
        });
    }
    let f = fs::File::open(path).map_err(io("read", path))?;
    // The path may have been replaced between the two looks: check the
    // opened file itself, and never read more than the cap.
    let meta = f.metadata().map_err(io("read", path))?;
    if !meta.is_file() {
        return Err(FileError::NotRegular {
            path: path.into(),
            kind: kind_of(&meta.file_type()),
        });
    }
    let mut bytes = Vec::with_capacity(meta.len().min(cap) as usize);
    f.take(cap + 1)
        .read_to_end(&mut bytes)
        .map_err(io("read", path))?;
    if bytes.len() as u64 > cap {
        return Err(FileError::TooLarge {
            path: path.into(),
            size: bytes.len() as u64,
            cap,
        });
    }
    Ok(bytes)
}

/// Reads a UTF-8 text file of at most [`MAX_TEXT_BYTES`] through
/// [`read_bounded`].
///
/// ```
/// let p = std::env::temp_dir().join(format!("fsv-doc-text-{}", std::process::id()));
/// std::fs::write(&p, [0x66, 0xff]).unwrap();
/// let e = fixsight_verify::files::read_text(&p).unwrap_err();
/// assert!(e.to_string().contains("offset 1"));
/// # std::fs::remove_file(&p).unwrap();
/// ```
pub fn read_text(path: &Path) -> Result<String, FileError> {
    let bytes = read_bounded(path, MAX_TEXT_BYTES)?;
    String::from_utf8(bytes).map_err(|e| FileError::NotText {
        path: path.into(),
        offset: e.utf8_error().valid_up_to(),
    })
}

/// Checks that `name` is a plain file name: not empty, no path separator,
/// not `.`/`..`, no control character, not starting with `.` (hidden files
/// and the tool's temporaries start with a dot).
///
/// ```
/// use fixsight_verify::files::plain_name;
/// assert!(plain_name("lens_grid.rs").is_ok());
/// assert!(plain_name("../x.rs").is_err());
/// assert!(plain_name("/abs/x.rs").is_err());
/// ```
pub fn plain_name(name: &str) -> Result<&str, FileError> {
    let bad = |reason| FileError::BadName {
        name: name.into(),
        reason,
    };
    if name.is_empty() {
        return Err(bad("is empty"));
    }
    if name.contains('/') || name.contains('\\') {
        return Err(bad("contains a path separator"));
    }
    if name.starts_with('.') {
        return Err(bad("starts with a dot"));
    }
    if name.chars().any(char::is_control) {
        return Err(bad("contains a control character"));
    }
    if name.len() > 200 {
        return Err(bad("is longer than 200 bytes"));
    }
    Ok(name)
}

/// A set of output files written together (rules in the module docs).
///
/// ```
/// use fixsight_verify::files::Outputs;
/// let dir = std::env::temp_dir().join(format!("fsv-doc-out-{}", std::process::id()));
/// let mut o = Outputs::new(&dir, ["a.txt", "b.txt"], false, "--overwrite").unwrap();
/// o.write("a.txt", b"one").unwrap();
/// o.write("b.txt", b"two").unwrap();
/// o.commit().unwrap();
/// assert_eq!(std::fs::read(dir.join("b.txt")).unwrap(), b"two");
/// // A second run without the flag is refused before anything is written.
/// let e = Outputs::new(&dir, ["a.txt"], false, "--overwrite").unwrap_err();
/// assert!(e.to_string().contains("a.txt") && e.to_string().contains("--overwrite"));
/// # std::fs::remove_dir_all(&dir).unwrap();
/// ```
#[derive(Debug)]
pub struct Outputs {
    dir: PathBuf,
    overwrite: bool,
    flag: &'static str,
    /// `(final name, temporary path)` of every staged output.
    staged: Vec<(String, PathBuf)>,
}

static COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);

fn unique_suffix() -> String {
    format!(
        "{}-{}",
        std::process::id(),
        COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed)
    )
}

impl Outputs {
    /// Starts a set of outputs in `dir` (created at the first write if
    /// missing). `names` are
    /// the files the command will write, checked now: plain names, and
    /// unless `overwrite`, none exists yet (`flag` is the option named in
    /// the refusal).
    pub fn new<'a>(
        dir: &Path,
        names: impl IntoIterator<Item = &'a str>,
        overwrite: bool,
        flag: &'static str,
    ) -> Result<Self, FileError> {
        let o = Self {
            dir: dir.to_path_buf(),
            overwrite,
            flag,
            staged: Vec::new(),
        };
        for n in names {
            o.check(n)?;
        }
        Ok(o)
    }

    /// The output folder.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    fn check(&self, name: &str) -> Result<PathBuf, FileError> {
        let p = self.dir.join(plain_name(name)?);
        match fs::symlink_metadata(&p) {
            Ok(m) if m.is_dir() => Err(FileError::NotRegular {
                path: p,
                kind: "a folder",
            }),
            Ok(_) if !self.overwrite => Err(FileError::Exists {
                path: p,
                flag: self.flag,
            }),
            _ => Ok(p),
        }
    }

    /// Stages `name` with the bytes `bytes`.
    pub fn write(&mut self, name: &str, bytes: &[u8]) -> Result<(), FileError> {
        self.write_with(name, |p| {
            let mut f = fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(p)?;
            f.write_all(bytes)?;
            f.sync_all()
        })
    }

    /// Stages `name` by letting `fill` write the temporary file at the path
    /// it is given (for writers that want a path, such as image encoders).
    pub fn write_with(
        &mut self,
        name: &str,
        fill: impl FnOnce(&Path) -> std::io::Result<()>,
    ) -> Result<(), FileError> {
        let target = self.check(name)?;
        fs::create_dir_all(&self.dir).map_err(io("create the folder", &self.dir))?;
        // The extension stays last: image writers choose the format by it.
        let tmp = self.dir.join(match name.rsplit_once('.') {
            Some((stem, ext)) => format!(".{stem}.part-{}.{ext}", unique_suffix()),
            None => format!(".{name}.part-{}", unique_suffix()),
        });
        // Registered before it is created, so that Drop removes it whatever
        // happens next.
        self.staged.push((name.to_string(), tmp.clone()));
        fill(&tmp).map_err(io("write", &target))
    }

    /// Renames every staged file into place. If one rename fails, the files
    /// replaced so far get their previous contents back and the error is
    /// returned. Returns the final paths.
    pub fn commit(mut self) -> Result<Vec<PathBuf>, FileError> {
        let staged = std::mem::take(&mut self.staged);
        // (target, backup of what was there) for every file renamed in.
        let mut done: Vec<(PathBuf, Option<PathBuf>)> = Vec::new();
        let mut result = Ok(());
        for (name, tmp) in &staged {
            let target = self.dir.join(name);
            let step = (|| {
                let existing = fs::symlink_metadata(&target).ok();
                if existing.as_ref().is_some_and(|m| m.is_dir()) {
                    return Err(FileError::NotRegular {
                        path: target.clone(),
                        kind: "a folder",
                    });
                }
                let backup = if existing.is_some() {
                    if !self.overwrite {
                        // Created by someone else since `new`: keep it.
                        return Err(FileError::Exists {
                            path: target.clone(),
                            flag: self.flag,
                        });
                    }
                    let b = self
                        .dir
                        .join(format!(".{name}.previous-{}", unique_suffix()));
                    fs::rename(&target, &b).map_err(io("set aside", &target))?;
                    Some(b)
                } else {
                    None
                };
                match fs::rename(tmp, &target) {
                    Ok(()) => {
                        done.push((target.clone(), backup));
                        Ok(())
                    }
                    Err(e) => {
                        if let Some(b) = backup {
                            let _ = fs::rename(b, &target);
                        }
                        Err(io("rename into place", &target)(e))
                    }
                }
            })();
            if let Err(e) = step {
                result = Err(e);
                break;
            }
        }
        match result {
            Ok(()) => {
                for (_, backup) in done {
                    if let Some(b) = backup {
                        let _ = fs::remove_file(b);
                    }
                }
                Ok(staged.iter().map(|(n, _)| self.dir.join(n)).collect())
            }
            Err(e) => {
                for (target, backup) in done.into_iter().rev() {
                    match backup {
                        Some(b) => {
                            let _ = fs::rename(b, &target);
                        }
                        None => {
                            let _ = fs::remove_file(&target);
                        }
                    }
                }
                for (_, tmp) in &staged {
                    let _ = fs::remove_file(tmp);
                }
                Err(e)
            }
        }
    }
}

impl Drop for Outputs {
    /// Removes the temporary files of a set that was not committed.
    fn drop(&mut self) {
        for (_, tmp) in &self.staged {
            let _ = fs::remove_file(tmp);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tmp(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("fsv-files-{tag}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        d
    }

    #[test]
    fn refuses_non_regular_files_without_opening_them() {
        assert!(matches!(
            read_bounded(Path::new("/dev/zero"), 1 << 20),
            Err(FileError::NotRegular {
                kind: "a device",
                ..
            })
        ));
        let d = tmp("fifo");
        fs::create_dir_all(&d).unwrap();
        let fifo = d.join("x.bin");
        let st = std::process::Command::new("mkfifo").arg(&fifo).status();
        if st.map(|s| s.success()).unwrap_or(false) {
            let e = read_bounded(&fifo, 10).unwrap_err();
            assert!(e.to_string().contains("FIFO"), "{e}");
        }
        #[cfg(unix)]
        {
            let link = d.join("zero.bin");
            std::os::unix::fs::symlink("/dev/zero", &link).unwrap();
            assert!(matches!(
                read_bounded(&link, 10),
                Err(FileError::NotRegular { .. })
            ));
        }
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_failed_set_leaves_the_folder_as_it_was() {
        let d = tmp("fail");
        fs::create_dir_all(&d).unwrap();
        fs::write(d.join("a.txt"), "old a").unwrap();
        fs::write(d.join("mine.bin"), "user file").unwrap();
        {
            let mut o = Outputs::new(&d, ["a.txt", "b.txt"], true, "--overwrite").unwrap();
            o.write("a.txt", b"new a").unwrap();
            // A writer that fails halfway (as on a full disk).
            let e = o
                .write_with("b.txt", |p| {
                    fs::write(p, b"partial")?;
                    Err(std::io::Error::other("disk full"))
                })
                .unwrap_err();
            assert!(e.to_string().contains("b.txt") && e.to_string().contains("disk full"));
        }
        let mut names: Vec<_> = fs::read_dir(&d)
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .collect();
        names.sort();
        assert_eq!(names, ["a.txt", "mine.bin"]);
        assert_eq!(fs::read_to_string(d.join("a.txt")).unwrap(), "old a");
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_failed_rename_puts_the_replaced_files_back() {
        let d = tmp("rename");
        fs::create_dir_all(&d).unwrap();
        fs::write(d.join("a.txt"), "old a").unwrap();
        let mut o = Outputs::new(&d, ["a.txt", "b.txt"], true, "--overwrite").unwrap();
        o.write("a.txt", b"new a").unwrap();
        o.write("b.txt", b"new b").unwrap();
        // Make the second rename fail: a folder now stands where b.txt goes.
        fs::create_dir(d.join("b.txt")).unwrap();
        fs::write(d.join("b.txt").join("inside"), "x").unwrap();
        assert!(o.commit().is_err());
        assert_eq!(fs::read_to_string(d.join("a.txt")).unwrap(), "old a");
        let hidden = fs::read_dir(&d)
            .unwrap()
            .filter(|e| {
                e.as_ref()
                    .unwrap()
                    .file_name()
                    .to_string_lossy()
                    .starts_with('.')
            })
            .count();
        assert_eq!(hidden, 0, "temporary or backup files left behind");
        fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn names_and_messages() {
        for n in ["", "../x", "/abs/x", "a/b", ".hidden", "a\u{0}b", "a\\b"] {
            assert!(plain_name(n).is_err(), "{n:?}");
        }
        let e = FileError::Io {
            action: "read",
            path: "/no/such\u{feff}".into(),
            source: std::io::Error::from(std::io::ErrorKind::PermissionDenied),
        };
        assert!(
            e.to_string()
                .starts_with("cannot read `/no/such\\u{feff}`: "),
            "{e}"
        );
    }
}
