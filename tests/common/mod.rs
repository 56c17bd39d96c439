//! Helpers shared by integration tests (each test crate includes this with `mod common;`).

use std::sync::mpsc;
use std::time::Duration;

/// Runs `f` on its own thread and returns its result; fails the test if `f` takes longer
/// than `seconds` (a hang becomes a failure), and passes a panic of `f` on as it was.
pub fn within<T: Send + 'static>(seconds: u64, f: impl FnOnce() -> T + Send + 'static) -> T {
    let (send, receive) = mpsc::channel();
    let worker = std::thread::spawn(move || {
        let _ = send.send(f());
    });
    match receive.recv_timeout(Duration::from_secs(seconds)) {
        Ok(value) => value,
        Err(mpsc::RecvTimeoutError::Disconnected) => match worker.join() {
            Err(panic) => std::panic::resume_unwind(panic),
            Ok(()) => panic!("the test thread ended without a result"),
        },
        Err(mpsc::RecvTimeoutError::Timeout) => panic!("did not finish within {seconds} s"),
    }
}
