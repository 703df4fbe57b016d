//! Writing text out: standard output (a closed pipe, as in `rungs … | head`, is not an
//! error), or a file written atomically — a temporary file in the same directory,
//! flushed, then renamed over the target — so a reader never sees half a report and an
//! interrupted run leaves the old file intact. Figures (`--plot FILE.svg|png`) use the same
//! helper.

use std::io::{ErrorKind, Write};
use std::path::Path;

use crate::error::CliError;

/// Write `bytes` to `path` atomically (temporary file in the same directory + rename,
/// via `tempfile::NamedTempFile::persist`). The file gets the usual permissions
/// (0666 less the umask), not the temporary file's private 0600.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), CliError> {
    let err = |source: std::io::Error| CliError::Write {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    if !dir.is_dir() {
        let missing = format!("directory `{}` does not exist", dir.display());
        return Err(err(std::io::Error::new(ErrorKind::NotFound, missing)));
    }
    let mut builder = tempfile::Builder::new();
    builder.prefix(".rungs-").suffix(".tmp");
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    let mut file = builder.tempfile_in(dir).map_err(err)?;
    file.write_all(bytes).map_err(err)?;
    file.flush().map_err(err)?;
    file.as_file().sync_all().map_err(err)?;
    file.persist(path).map_err(|e| err(e.error))?;
    Ok(())
}

/// Write `bytes` to standard output; a reader that went away is not an error.
pub fn write_stdout(bytes: &[u8]) -> Result<(), CliError> {
    let mut out = std::io::stdout().lock();
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == ErrorKind::BrokenPipe => Ok(()),
        Err(source) => Err(CliError::Write {
            path: "standard output".into(),
            source,
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn atomic_write_replaces_the_file_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("report.json");
        std::fs::write(&path, "old").unwrap();
        write_atomic(&path, b"new content\n").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "new content\n");
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names.len(), 1, "left behind: {names:?}");
    }

    #[test]
    fn missing_directory_is_a_clear_error() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("no/such/dir/report.csv");
        let e = write_atomic(&path, b"x").unwrap_err();
        assert_eq!(e.exit_code(), 2);
        assert!(e.to_string().contains("no/such/dir/report.csv"), "{e}");
    }
}
