//! Writing to standard output without panicking.
//!
//! `print!` panics when the reader has gone away (`rungs check FILE | head`). Every command
//! builds its text and hands it to [`emit`], which treats a closed pipe as the reader's choice
//! to stop: the command ends quietly with exit code 0. Other write errors are reported on
//! standard error with exit code 1. Messages for standard error go through [`complain`]
//! (`eprintln!` panics when standard error is a closed pipe, too).

use std::io::Write;
use std::process::ExitCode;

/// Writes `text` to standard output; `Err` carries the exit code to end with.
pub fn emit(text: &str) -> Result<(), ExitCode> {
    let mut stdout = std::io::stdout().lock();
    match stdout
        .write_all(text.as_bytes())
        .and_then(|()| stdout.flush())
    {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Err(ExitCode::SUCCESS),
        Err(e) => {
            // Standard error may be closed as well: nothing more can be said then.
            complain(&format!("rungs: cannot write the output: {e}"));
            Err(ExitCode::from(1))
        }
    }
}

/// Writes `line` and a newline to standard error. When standard error cannot be written (a
/// closed pipe), nothing more can be said: the command goes on to its exit code.
pub fn complain(line: &str) {
    let mut stderr = std::io::stderr().lock();
    let _ = writeln!(stderr, "{line}");
}
