//! Progress bars for the commands that run longer than a second, and the
//! quiet mode.
//!
//! A bar is drawn on stderr with `indicatif`, and only when stderr is a
//! terminal (so a CI log or a redirected run gets none) and the command
//! line did not say `--quiet`. With `--quiet` the long commands (`report`,
//! `targets`, `golden`) also leave out their tables: they print the
//! failures, the verdict and where the files went, and write the same
//! files as without it.
//!
//! ```
//! use fixsight_verify::progress;
//! progress::set_quiet(true);
//! let bar = progress::bar(3, "checking");
//! assert!(bar.is_hidden());
//! bar.inc(1);
//! bar.finish_and_clear();
//! assert!(progress::quiet());
//! progress::set_quiet(false);
//! ```

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::sync::atomic::{AtomicBool, Ordering};

static QUIET: AtomicBool = AtomicBool::new(false);

/// Sets the quiet mode for the rest of the process (`--quiet`).
pub fn set_quiet(q: bool) {
    QUIET.store(q, Ordering::Relaxed);
}

/// Whether the command line asked for the quiet mode.
pub fn quiet() -> bool {
    QUIET.load(Ordering::Relaxed)
}

/// A bar of `len` steps labelled `what`, hidden in the quiet mode (and by
/// `indicatif` when stderr is not a terminal).
pub fn bar(len: u64, what: &str) -> ProgressBar {
    let target = if quiet() {
        ProgressDrawTarget::hidden()
    } else {
        ProgressDrawTarget::stderr()
    };
    let b = ProgressBar::with_draw_target(Some(len), target);
    if let Ok(style) =
        ProgressStyle::with_template("{prefix} [{bar:30}] {pos}/{len} {elapsed} {wide_msg}")
    {
        b.set_style(style.progress_chars("=> "));
    }
    b.set_prefix(what.to_string());
    b
}
