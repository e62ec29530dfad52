//! Ctrl-C. The first one asks the running command to stop: the search ends at its next check
//! (well within a second), the command writes what it has (the best tour, the plan, the runs
//! recorded so far) and prints its summary, and the process exits with 130, the shell's code
//! for "ended by SIGINT". A second Ctrl-C ends the process at once, also with 130.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::OnceLock;
use wend::StopHandle;

/// Exit code after an interruption (128 + SIGINT), as shells report it.
pub const EXIT_CODE: u8 = 130;

static STOP: OnceLock<StopHandle> = OnceLock::new();
static ASKED: AtomicBool = AtomicBool::new(false);

/// Installs the handler (once; later calls are harmless). If the handler cannot be installed
/// (another one is in place), Ctrl-C keeps its default meaning: the process ends at once.
pub fn install() {
    let stop = STOP.get_or_init(StopHandle::new).clone();
    let _ = ctrlc::set_handler(move || {
        if ASKED.swap(true, Ordering::SeqCst) {
            // The second Ctrl-C: the user does not want to wait.
            std::process::exit(i32::from(EXIT_CODE));
        }
        eprintln!("\nwend: interrupted; finishing with the best result so far (Ctrl-C again to quit at once)");
        stop.stop();
    });
}

/// The handle that Ctrl-C stops: hand it to every search a command runs.
pub fn handle() -> StopHandle {
    STOP.get_or_init(StopHandle::new).clone()
}

/// Whether Ctrl-C was pressed.
pub fn interrupted() -> bool {
    ASKED.load(Ordering::SeqCst)
}
