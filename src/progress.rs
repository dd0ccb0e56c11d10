//! Progress reporting for long stages, shared by the command line (progress bars),
//! batch runs and the HTTP service (a job's `progress` field).

/// Receives progress from the library. Every method has a do-nothing default.
pub trait Progress: Sync {
    /// A stage named `stage` begins with `total` units of work (0 if unknown).
    fn begin(&self, _stage: &str, _total: u64) {}
    /// `done` of the current stage's units are finished.
    fn advance(&self, _done: u64) {}
    /// The current stage has ended.
    fn end(&self) {}
}

/// Progress sink that ignores everything.
#[derive(Debug, Default, Clone, Copy)]
pub struct Silent;

impl Progress for Silent {}
