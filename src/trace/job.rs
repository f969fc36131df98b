//! Tracing off the caller's thread, so an editor can retrace on every drag and abandon a
//! stale trace at once.

use std::sync::Arc;
use std::sync::mpsc::{Receiver, TryRecvError, channel};
use std::thread;

use super::{Compiled, Control, Trace, TraceConfig, trace_compiled, trace_with};
use crate::scene::Scene;

/// A trace running on a background thread.
#[derive(Debug)]
pub struct TraceJob {
    control: Arc<Control>,
    result: Receiver<Trace>,
    done: Option<Trace>,
}

impl TraceJob {
    /// Starts tracing a copy of `scene`.
    pub fn start(scene: Scene, config: TraceConfig) -> Self {
        let control = Arc::new(Control::new());
        let (tx, rx) = channel();
        let c = Arc::clone(&control);
        thread::spawn(move || {
            let t = trace_with(&scene, &config, &c);
            // The receiver may be gone if the job was dropped; nothing to do then.
            let _ = tx.send(t);
        });
        Self { control, result: rx, done: None }
    }

    /// Starts tracing a copy of `scene` with a compiled form of it, which the job shares:
    /// the editor keeps its `Arc<Compiled>`, brings it up to date after each edit with
    /// [`Compiled::update`] (through `Arc::make_mut`, which copies it only while an older
    /// job still holds it) and starts the next job with a clone of the `Arc`.
    pub fn start_compiled(scene: Scene, compiled: Arc<Compiled>, config: TraceConfig) -> Self {
        let control = Arc::new(Control::new());
        let (tx, rx) = channel();
        let c = Arc::clone(&control);
        thread::spawn(move || {
            let t = trace_compiled(&scene, &compiled, &config, &c);
            // The receiver may be gone if the job was dropped; nothing to do then.
            let _ = tx.send(t);
        });
        Self { control, result: rx, done: None }
    }

    /// Asks the trace to stop as soon as possible (it returns a partial, cancelled trace).
    pub fn cancel(&self) {
        self.control.cancel();
    }

    /// Launched rays finished so far and in all.
    pub fn progress(&self) -> (u64, u64) {
        self.control.progress()
    }

    /// The finished trace, if it is ready; never blocks.
    pub fn poll(&mut self) -> Option<&Trace> {
        if self.done.is_none() {
            match self.result.try_recv() {
                Ok(t) => self.done = Some(t),
                Err(TryRecvError::Empty | TryRecvError::Disconnected) => {}
            }
        }
        self.done.as_ref()
    }

    /// Waits for the trace and returns it (`None` only if the worker thread died).
    pub fn wait(mut self) -> Option<Trace> {
        if let Some(t) = self.done.take() {
            return Some(t);
        }
        self.result.recv().ok()
    }
}

impl Drop for TraceJob {
    fn drop(&mut self) {
        // A dropped job is stale: stop its work.
        self.control.cancel();
    }
}
