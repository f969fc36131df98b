//! Tracing in the background: the UI never waits for a trace.
//!
//! Every new scene revision asks for a trace. The newest revision wins: a stale trace that
//! has been running for a while is cancelled and the new one started; a stale trace that has
//! only just started is let finish (it is probably almost done and shows something close
//! to the current scene), and the newest revision is traced right after it. Until a new
//! trace finishes, the last finished one stays on screen.
//!
//! The compiled scene (BVH, media, checked outlines) is kept between traces and brought up
//! to date with [`Compiled::update`] on the worker thread, so dragging one vertex refits the
//! BVH and re-checks one solid instead of compiling the whole scene again.

use std::sync::mpsc::{Receiver, TryRecvError, channel};
use std::sync::{Arc, Mutex};
use std::thread;
use std::time::{Duration, Instant};

use crate::analysis::{EscapedByEdge, escaped_by_edge};
use crate::scene::Scene;
use crate::trace::{Compiled, Control, Trace, TraceConfig, trace_compiled};

/// A running trace that has been going this long is cancelled when a newer revision waits.
const STALE_AFTER: Duration = Duration::from_millis(200);

struct Running {
    revision: u64,
    control: Arc<Control>,
    /// The trace, its escaped light by edge, and how long both took on their thread
    /// (compile update included).
    result: Receiver<(Trace, EscapedByEdge, Duration)>,
    started: Instant,
}

/// The background trace of the document.
#[derive(Default)]
pub struct TraceWorker {
    running: Option<Running>,
    shown: Option<Arc<Trace>>,
    /// Escaped light by edge of the shown trace, worked out on the trace's thread.
    shown_escaped: Option<Arc<EscapedByEdge>>,
    shown_revision: Option<u64>,
    /// How long the last finished trace took on its thread, compile update included (not
    /// the wait until a frame picked it up).
    pub last_duration: Option<Duration>,
    /// The revision the user cancelled: not traced again until the next edit.
    cancelled_revision: Option<u64>,
    /// How many traces finished (a counter for the canvas cache and for tests).
    pub n_finished: u64,
    /// How many traces were started.
    pub n_started: u64,
    /// The compiled form of the last traced revision, taken by the next trace and given back
    /// when it is done (a trace that finds it taken compiles from scratch).
    compiled: Arc<Mutex<Option<Compiled>>>,
}

impl TraceWorker {
    /// Call once a frame: collects a finished trace and starts the next if the scene changed.
    /// Returns true while a trace is running (the caller should keep repainting).
    pub fn update(&mut self, scene: &Scene, revision: u64) -> bool {
        if let Some(r) = &self.running {
            match r.result.try_recv() {
                Ok((t, escaped, took)) => {
                    self.last_duration = Some(took);
                    self.shown_escaped = Some(Arc::new(escaped));
                    self.shown_revision = Some(r.revision);
                    self.shown = Some(Arc::new(t));
                    self.n_finished += 1;
                    self.running = None;
                }
                Err(TryRecvError::Disconnected) => self.running = None,
                Err(TryRecvError::Empty) => {}
            }
        }
        let wanted = self.shown_revision != Some(revision) && self.cancelled_revision != Some(revision);
        if wanted {
            match &self.running {
                Some(r) if r.revision == revision => {}
                Some(r) if r.started.elapsed() < STALE_AFTER => {}
                _ => self.start(scene, revision),
            }
        }
        self.running.is_some()
    }

    fn start(&mut self, scene: &Scene, revision: u64) {
        if let Some(old) = self.running.take() {
            old.control.cancel();
        }
        let control = Arc::new(Control::new());
        let (tx, rx) = channel();
        let c = Arc::clone(&control);
        let scene = scene.clone();
        let config = TraceConfig::from_scene(&scene);
        let slot = Arc::clone(&self.compiled);
        thread::spawn(move || {
            let started = Instant::now();
            // A poisoned lock only means another trace thread panicked; the slot is still
            // a valid `Option`, so take it anyway.
            let kept = slot.lock().unwrap_or_else(std::sync::PoisonError::into_inner).take();
            let compiled = match kept {
                Some(mut c) => {
                    c.update(&scene);
                    c
                }
                None => Compiled::new(&scene),
            };
            let t = trace_compiled(&scene, &compiled, &config, &c);
            let mut guard = slot.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
            if guard.is_none() {
                *guard = Some(compiled);
            }
            drop(guard);
            // The receiver is gone when the job went stale; nothing to do then.
            let escaped = escaped_by_edge(&t);
            let _ = tx.send((t, escaped, started.elapsed()));
        });
        self.n_started += 1;
        self.running = Some(Running { revision, control, result: rx, started: Instant::now() });
    }

    /// Stops the running trace; its partial result is shown when it arrives.
    pub fn cancel(&mut self) {
        if let Some(r) = &self.running {
            r.control.cancel();
            self.cancelled_revision = Some(r.revision);
        }
    }

    /// Escaped light by edge of the last finished trace.
    pub fn escaped_by_edge(&self) -> Option<&Arc<EscapedByEdge>> {
        self.shown_escaped.as_ref()
    }

    /// The last finished trace, if any.
    pub fn trace(&self) -> Option<&Arc<Trace>> {
        self.shown.as_ref()
    }

    /// The scene revision the shown trace belongs to.
    pub fn shown_revision(&self) -> Option<u64> {
        self.shown_revision
    }

    pub fn is_running(&self) -> bool {
        self.running.is_some()
    }

    /// Launched rays done and in all, and seconds elapsed, of the running trace.
    pub fn progress(&self) -> Option<(u64, u64, f64)> {
        self.running.as_ref().map(|r| {
            let (done, total) = r.control.progress();
            (done, total, r.started.elapsed().as_secs_f64())
        })
    }

    /// Forgets everything (a new document).
    pub fn reset(&mut self) {
        if let Some(r) = self.running.take() {
            r.control.cancel();
        }
        self.shown = None;
        self.shown_escaped = None;
        self.shown_revision = None;
        self.cancelled_revision = None;
        // A new document: nothing of the old compiled scene can be reused.
        *self.compiled.lock().unwrap_or_else(std::sync::PoisonError::into_inner) = None;
    }
}
