//! SIGINT and SIGTERM while reports are written: nothing half-written stays.
//!
//! The default action of both signals ends the process at once, which would
//! leave the writer's staging folder (possibly large) behind. While a writer
//! holds a [`WritingGuard`], a signal only raises a flag: the writer sees it
//! between chunks, removes what it staged and returns
//! [`ReportError::Interrupted`](super::ReportError::Interrupted); the handler
//! waits for the guard to be released and then ends the process the way the
//! signal would have (so the shell still sees "killed by SIGINT"). A signal
//! arriving while the new set is being put in place (the exchange of the
//! directory and the removal of the old one, or the moves file by file)
//! waits until it is, so the target holds either the old set or the new one.
//! SIGKILL cannot be caught: what a killed run leaves, the next run writing
//! there clears (`writer/leftovers.rs`).
//!
//! The signals are received by a thread of the `signal-hook` crate rather than
//! in a signal handler: removing files is not allowed inside a handler, and the
//! crate keeps the handler itself to the few async-signal-safe calls needed.

use signal_hook::consts::{SIGINT, SIGTERM};
use signal_hook::iterator::Signals;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Mutex, MutexGuard, Once, PoisonError};

/// Set by the signal thread once SIGINT or SIGTERM arrived.
static INTERRUPTED: AtomicBool = AtomicBool::new(false);
/// Held while reports are written; the signal thread takes it before ending
/// the process.
static WRITING: Mutex<()> = Mutex::new(());
static INSTALL: Once = Once::new();

/// Proof that reports are being written: while it lives, SIGINT and SIGTERM
/// are deferred to [`interrupted`] checks.
pub(super) struct WritingGuard {
    _held: MutexGuard<'static, ()>,
}

/// Installs the signal thread (once per process) and holds the writing lock.
pub(super) fn start_writing() -> WritingGuard {
    INSTALL.call_once(install);
    WritingGuard {
        _held: WRITING.lock().unwrap_or_else(PoisonError::into_inner),
    }
}

impl WritingGuard {
    /// Releases the writing lock. After SIGINT or SIGTERM the signal thread
    /// then ends the process the way the signal would have; this thread
    /// waits for that rather than going on, so the process never ends
    /// another way first (with an error status, say).
    pub(super) fn release(self) {
        drop(self);
        if interrupted() {
            loop {
                std::thread::park();
            }
        }
    }
}

/// Whether SIGINT or SIGTERM arrived: the writer then stops and cleans up.
pub(super) fn interrupted() -> bool {
    INTERRUPTED.load(Ordering::SeqCst)
}

fn install() {
    let Ok(mut signals) = Signals::new([SIGINT, SIGTERM]) else {
        return;
    };
    // If the thread cannot start, the closure and `signals` with it are
    // dropped, which unregisters the handlers: the signals then keep their
    // default action.
    let _ = std::thread::Builder::new()
        .name("runcast-signals".into())
        .spawn(move || {
            if let Some(signal) = signals.forever().next() {
                INTERRUPTED.store(true, Ordering::SeqCst);
                // Wait for the writer to clean up or to finish moving files in.
                let _writing = WRITING.lock().unwrap_or_else(PoisonError::into_inner);
                let _ = signal_hook::low_level::emulate_default_handler(signal);
                std::process::exit(128 + signal);
            }
        });
}
