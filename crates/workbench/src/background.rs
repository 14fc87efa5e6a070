//! The slow figures of a bench — a clipped field's vignetting, the sharpness figures — computed off the
//! frame.
//!
//! Integrating a clipped field's pupil takes thousands of traces (tens of ms on a 60-part bench). While the
//! rim certificate vouches for the field (most benches) there is nothing to integrate. Otherwise the
//! workbench evaluates each revision live ([`Evaluation::live`]) and integrates in the frame only while
//! that has stayed cheap; once one integration has taken more than [`FRAME_SHARE`], the next go to a
//! background thread, one at a time, and the readout says "being computed" until the figures for the
//! bench on screen arrive. Completed, the evaluation equals [`Evaluation::of`] in every figure.

use crate::Workbench;
use lumenrail_bench::evaluation::{Deferred, Evaluation, VignettingJob};
use std::sync::mpsc::{Receiver, TryRecvError, channel};
use std::time::{Duration, Instant};

/// The time an integration may take inside a frame (a quarter of a 60 Hz frame).
pub const FRAME_SHARE: Duration = Duration::from_millis(4);

/// The background integration's state.
#[derive(Debug, Default)]
pub(crate) struct Background {
    /// Whether slow work may go to background threads at all (the window: yes; tests and scripts that
    /// want every figure at once: no, the default).
    pub(crate) offload: bool,
    /// Whether the last integration took longer than [`FRAME_SHARE`].
    slow: bool,
    /// The integration under way: its revision's result arrives here.
    running: Option<Receiver<(u64, Deferred, Duration)>>,
}

impl Background {
    fn start(&mut self, revision: u64, job: VignettingJob) {
        let (send, receive) = channel();
        std::thread::spawn(move || {
            let started = Instant::now();
            let v = job.run();
            // The receiver is gone only when the workbench is; then nobody needs the result.
            let _ = send.send((revision, v, started.elapsed()));
        });
        self.running = Some(receive);
    }
}

impl Workbench {
    /// The evaluation of the current bench: live, its vignetting integrated here while that is cheap and
    /// on the background thread once it is not.
    pub(crate) fn evaluate(&mut self) -> Evaluation {
        let mut e = Evaluation::live(&self.bench);
        if let Some(job) = e.vignetting_job() {
            if self.background.offload && self.background.slow {
                if self.background.running.is_none() {
                    self.background.start(self.revision, job);
                }
            } else {
                let started = Instant::now();
                let v = job.run();
                self.background.slow = started.elapsed() > FRAME_SHARE;
                e.complete_vignetting(v);
            }
        }
        e
    }

    /// Once a frame: takes the background's result (kept only if it is for the bench on screen), starts
    /// the next integration when the bench on screen still waits for one, and keeps frames coming while it
    /// does.
    pub(crate) fn background_step(&mut self, ctx: &egui::Context) {
        if let Some(receive) = &self.background.running {
            match receive.try_recv() {
                Ok((revision, v, took)) => {
                    self.background.running = None;
                    self.background.slow = took > FRAME_SHARE;
                    if revision == self.revision && self.vignetting_pending() {
                        self.evaluation.complete_vignetting(v);
                    }
                }
                Err(TryRecvError::Empty) => {}
                Err(TryRecvError::Disconnected) => {
                    // The thread died without a result: integrate in the frame from now on.
                    self.background.running = None;
                    self.background.slow = false;
                }
            }
        }
        if self.vignetting_pending() {
            if self.background.running.is_none()
                && let Some(job) = self.evaluation.vignetting_job()
            {
                if self.background.offload && self.background.slow {
                    self.background.start(self.revision, job);
                } else {
                    self.evaluation.complete_vignetting(job.run());
                }
            }
            ctx.request_repaint_after(Duration::from_millis(15));
        }
    }

    /// Lets slow work (a clipped field's vignetting, a slow view) go to background threads once it has
    /// taken more than [`FRAME_SHARE`] (`true`, as the window does), or keeps all of it in the frame (the
    /// default: every figure is there when an edit returns).
    pub fn offload_slow_work(&mut self, on: bool) {
        self.background.offload = on;
        self.views.offload = on;
    }

    /// Completes a pending integration here and now: before the readout is written out, so that a file
    /// never holds "being computed".
    pub fn settle(&mut self) {
        if let Some(job) = self.evaluation.vignetting_job() {
            self.evaluation.complete_vignetting(job.run());
        }
    }

    /// Whether the readout's slow figures (a clipped field's vignetting, the sharpness figures) are still
    /// being computed.
    pub fn vignetting_pending(&self) -> bool {
        self.evaluation.report.vignetting_pending || self.evaluation.report.sharpness_pending
    }
}
