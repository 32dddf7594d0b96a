//! The two system calls the writer needs that the standard library lacks,
//! each behind a safe function: exchanging two directories atomically, and
//! asking whether a process still runs.

use std::io;
use std::path::Path;

/// Exchanges the directory entries `first` and `second` in one atomic step,
/// `renameat2(2)` with `RENAME_EXCHANGE` (Linux 3.15; file systems that
/// cannot, such as NFS, give `EINVAL`). Both must exist; nothing changes on
/// error.
#[cfg(target_os = "linux")]
pub(super) fn exchange(first: &Path, second: &Path) -> io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let text = |path: &Path| {
        CString::new(path.as_os_str().as_bytes())
            .map_err(|_| io::Error::new(io::ErrorKind::InvalidInput, "a path holds a NUL byte"))
    };
    let (first, second) = (text(first)?, text(second)?);
    // SAFETY: both are NUL-terminated strings that outlive the call, which
    // only reads them.
    let status = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            first.as_ptr(),
            libc::AT_FDCWD,
            second.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if status == 0 {
        Ok(())
    } else {
        Err(io::Error::last_os_error())
    }
}

#[cfg(not(target_os = "linux"))]
pub(super) fn exchange(_first: &Path, _second: &Path) -> io::Result<()> {
    Err(io::Error::new(
        io::ErrorKind::Unsupported,
        "no atomic exchange of two directories on this system",
    ))
}

/// Whether process `pid` exists: `kill(2)` with signal 0 checks without
/// sending anything (POSIX), and `EPERM` means it runs as another user.
pub(super) fn process_exists(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return false;
    };
    // 0 and negative ids name process groups, not a process.
    if pid <= 0 {
        return false;
    }
    // SAFETY: signal 0 sends nothing; the call only reads its arguments.
    let status = unsafe { libc::kill(pid, 0) };
    status == 0 || io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
}
