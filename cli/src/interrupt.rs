//! Leaving no temporary file behind when interrupted.
//!
//! Every temporary file the command creates (see [`crate::target`]) is
//! remembered here from just before it is created until it is renamed into
//! place or removed. A thread waits for SIGINT, SIGTERM and SIGHUP; when one
//! arrives it removes the remembered files and ends the process by the same
//! signal with its default action, so the caller sees the usual status (a
//! shell reports 128 + the signal number). The handler itself only wakes
//! that thread (signal-hook's self-pipe), so the removal runs as ordinary
//! code, never inside a signal handler.
//!
//! A SIGKILL cannot be caught: its temporary file stays, under a name that
//! says which run left it, and the next run over the same target removes
//! it.

use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// The temporary files that exist now (or are about to).
static LIVE: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn live() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    LIVE.lock().unwrap_or_else(|e| e.into_inner())
}

/// Remembers `path` for removal on an interrupting signal.
pub fn remember(path: &Path) {
    live().push(path.to_path_buf());
}

/// Forgets `path` (renamed into place or removed).
pub fn forget(path: &Path) {
    live().retain(|p| p != path);
}

/// Starts the thread that cleans up on SIGINT, SIGTERM and SIGHUP. Where
/// the signals cannot be caught, they keep their default action (and a
/// temporary file may be left, as after a SIGKILL).
#[cfg(unix)]
pub fn watch() {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    use signal_hook::iterator::Signals;

    let Ok(mut signals) = Signals::new([SIGINT, SIGTERM, SIGHUP]) else {
        return;
    };
    let spawned = std::thread::Builder::new()
        .name("signals".into())
        .spawn(move || {
            if let Some(signal) = signals.forever().next() {
                // Held to the end: no new temporary file can appear after
                // the removal.
                let files = live();
                for path in files.iter() {
                    let _ = std::fs::remove_file(path);
                }
                let _ = signal_hook::low_level::emulate_default_handler(signal);
                // Only reached if the default action did not end the process.
                std::process::exit(128 + signal);
            }
        });
    drop(spawned);
}

/// Without Unix signals there is nothing to watch.
#[cfg(not(unix))]
pub fn watch() {}
