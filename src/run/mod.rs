//! The run executor: every long computation (scan grids, the nuisance evaluations of a bound,
//! the demo's families of shadows) is a deterministic list of work items run in parallel by
//! one [`Executor`], which owns the loop. The work computes; it never prints, writes files or
//! counts time. Around it the executor calls
//! - observers ([`Observe`]): progress on a terminal (the command line's bar), progress as
//!   plain lines for logs and notebooks ([`LineProgress`]), a test's callback;
//! - a checkpoint ([`Checkpoint`]; [`JsonlCheckpoint`] is the checked, hashed, locked
//!   JSON-lines file): finished items are recalled instead of computed, and each computed
//!   item is recorded as soon as it finishes;
//! - a stop flag (set by a Ctrl-C handler): items in progress finish and are recorded, no new
//!   one starts, and the run ends with [`RunError::Interrupted`].
//!
//! Outputs come back in item order whatever the number of threads, and each item's output
//! depends on that item alone, so results are bit-identical at any `RAYON_NUM_THREADS`.
//!
//! ## Identity and partition
//!
//! An item is identified by its index in the [`WorkList`] and by a canonical key
//! ([`WorkList::key`]): both are the same on any machine for the same arguments and umbral
//! version. The executor runs the items a [`Selection`] names: all of them, a shard (every
//! N-th item from the K-th, for a job array), or given indices. This is the seam for runs
//! past one machine: job-array shards are selections whose checkpoints a merge step joins by
//! key; an MPI back end replaces the local parallel loop of [`Executor::batch`] (rank 0 keeps
//! the observers and the checkpoint and hands out chunks of indices; every rank builds the
//! same work list from the same arguments, so an index is all a worker needs).
//!
//! ## Runs that grow
//!
//! A run whose next items depend on the last results (a bound refining where an allowed range
//! ends) calls [`Executor::batch`] once per step, then [`Executor::finish`]; a run with a
//! fixed list calls [`Executor::run`].
//!
//! ```
//! use std::sync::atomic::AtomicBool;
//! use umbral::run::{Executor, Selection, WorkList};
//!
//! /// Squares of 0..n.
//! struct Squares(usize);
//! impl WorkList for Squares {
//!     type Output = u64;
//!     fn len(&self) -> usize { self.0 }
//!     fn key(&self, index: usize) -> String { index.to_string() }
//!     fn run(&self, index: usize) -> u64 { (index * index) as u64 }
//! }
//!
//! let stop = AtomicBool::new(false);
//! let batch = Executor::new("squares", "numbers")
//!     .stop_when(&stop)
//!     .run(&Squares(5), &Selection::All)
//!     .unwrap();
//! assert_eq!(batch.outputs, vec![0, 1, 4, 9, 16]);
//! // A shard of a job array: every second item from the second.
//! let shard = Selection::shard(1, 2).unwrap();
//! let part = Executor::new("squares", "numbers").run(&Squares(5), &shard).unwrap();
//! assert_eq!(part.outputs, vec![1, 9]);
//! ```

pub mod bound;
pub mod calibrate;
mod checkpoint;
pub mod cluster;
mod file;
mod header;
pub mod image;
pub mod infer;
#[cfg(feature = "mpi")]
pub mod mpi;
mod observe;
pub mod shard;

pub use bound::{
    bound_with, checkpoint_name, open_checkpoint, BoundCheckpoint, BoundRunError, NodeFormat,
};
pub use checkpoint::{
    checkpoint_text, remedy, Checkpoint, CheckpointError, JsonlCheckpoint, RecordFormat,
};
pub use cluster::Wire;
pub use header::{metric_sha256, sha256_hex, MetricHashError};
pub use observe::{clock, LineProgress, Observe, Outcome, ProgressFn, Status};

use rayon::prelude::*;
use std::collections::HashSet;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Mutex;

/// A deterministic list of work items: the same items in the same order, with the same keys,
/// for the same arguments and umbral version on any machine.
pub trait WorkList: Sync {
    /// What one item computes.
    type Output: Send;
    /// The number of items.
    fn len(&self) -> usize;
    /// Whether the list is empty.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// The canonical key of item `index` (what a checkpoint records it under).
    fn key(&self, index: usize) -> String;
    /// Compute item `index`. No printing, no files, no clocks: observers and checkpoints do
    /// that.
    fn run(&self, index: usize) -> Self::Output;
    /// How the outputs travel to other processes and shard files, for a list that can be run
    /// past one process ([`cluster`], [`shard`]); `None` (the default) keeps it here.
    fn wire(&self) -> Option<&dyn Wire<Self::Output>> {
        None
    }
}

/// Which items of a work list to run.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Selection {
    /// Every item.
    All,
    /// Items `index`, `index + count`, `index + 2 count`, ... (shard `index` of `count`,
    /// numbered from 0); interleaved, so that costly regions of a grid are shared out.
    Shard {
        /// This shard's number, below `count`.
        index: usize,
        /// The number of shards.
        count: usize,
    },
    /// These items (indices beyond the list are ignored).
    Indices(Vec<usize>),
}

impl Selection {
    /// Shard `index` of `count` (numbered from 0), if `index < count`.
    pub fn shard(index: usize, count: usize) -> Option<Selection> {
        (index < count).then_some(Selection::Shard { index, count })
    }

    /// The selected indices of a list of `len` items, in increasing order.
    pub fn indices(&self, len: usize) -> Vec<usize> {
        match self {
            Selection::All => (0..len).collect(),
            Selection::Shard { index, count } => (*index..len).step_by((*count).max(1)).collect(),
            Selection::Indices(v) => {
                let mut v: Vec<usize> = v.iter().copied().filter(|&i| i < len).collect();
                v.sort_unstable();
                v.dedup();
                v
            }
        }
    }
}

/// Why a run did not complete.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RunError {
    /// Stopped on request after `done` items (every finished item was recorded).
    #[error("interrupted after {done} items")]
    Interrupted {
        /// Finished items, including those kept from an earlier run.
        done: usize,
        /// The run's size, if known.
        total: Option<usize>,
    },
    /// The checkpoint could not record an item.
    #[error(transparent)]
    Checkpoint(#[from] CheckpointError),
}

/// What a program attaches to a run that a library function makes for it: observers and a
/// stop flag.
#[derive(Default)]
pub struct Controls<'a> {
    /// Observers of the run.
    pub observers: Vec<&'a mut dyn Observe>,
    /// Stop (after the items in progress) once this is set.
    pub stop: Option<&'a AtomicBool>,
}

impl Controls<'_> {
    /// The same observers and stop flag, lent to one of several runs in a row.
    pub fn reborrow(&mut self) -> Controls<'_> {
        Controls {
            observers: self
                .observers
                .iter_mut()
                .map(|o| &mut **o as &mut dyn Observe)
                .collect(),
            stop: self.stop,
        }
    }
}

/// The outputs of one batch, in the order of the selected items.
#[derive(Debug, Clone, PartialEq)]
pub struct Batch<O> {
    /// One output per selected item, in item order.
    pub outputs: Vec<O>,
    /// Items computed by this batch.
    pub computed: usize,
    /// Items recalled from the checkpoint.
    pub kept: usize,
}

/// The executor: a named run with its observers, checkpoint and stop flag (see the module
/// documentation).
pub struct Executor<'a, O> {
    status: Status,
    observers: Vec<&'a mut dyn Observe>,
    checkpoint: Option<&'a mut dyn Checkpoint<O>>,
    stop: Option<&'a AtomicBool>,
    started: bool,
    interrupted: bool,
    /// Keys of the items this run has finished, computed or recalled (a later batch that
    /// recalls one of them does not count it again, nor as kept from an earlier run).
    finished: HashSet<String>,
}

/// What the parallel loop shares, behind one lock.
struct Shared<'s, 'a, O> {
    status: &'s mut Status,
    observers: &'s mut [&'a mut dyn Observe],
    checkpoint: Option<&'s mut (dyn Checkpoint<O> + 'a)>,
}

impl<'a, O: Send> Executor<'a, O> {
    /// A run called `name` (`scan`) whose items are `unit` (`points`), in messages.
    pub fn new(name: &str, unit: &str) -> Self {
        Executor {
            status: Status {
                name: name.to_string(),
                unit: unit.to_string(),
                done: 0,
                kept: 0,
                total: None,
                stage: None,
            },
            observers: Vec::new(),
            checkpoint: None,
            stop: None,
            started: false,
            interrupted: false,
            finished: HashSet::new(),
        }
    }

    /// Add an observer.
    pub fn observe(mut self, observer: &'a mut dyn Observe) -> Self {
        self.observers.push(observer);
        self
    }

    /// Attach the observers and stop flag of `controls`.
    pub fn with<'c: 'a>(mut self, controls: Controls<'c>) -> Self {
        for o in controls.observers {
            self.observers.push(o);
        }
        if let Some(stop) = controls.stop {
            self.stop = Some(stop);
        }
        self
    }

    /// Keep finished items in `checkpoint`, and recall them from it.
    pub fn checkpoint(mut self, checkpoint: &'a mut dyn Checkpoint<O>) -> Self {
        self.checkpoint = Some(checkpoint);
        self
    }

    /// Stop (after the items in progress) once `flag` is set.
    pub fn stop_when(mut self, flag: &'a AtomicBool) -> Self {
        self.stop = Some(flag);
        self
    }

    /// Say what the run does now (a run of several batches), for observers.
    pub fn stage(&mut self, stage: &str) {
        self.status.stage = Some(stage.to_string());
    }

    /// Where the run stands.
    pub fn status(&self) -> &Status {
        &self.status
    }

    /// Run `work` over `selection` and complete the run: the whole life of a run with a fixed
    /// list (its size is the run's total).
    pub fn run<W: WorkList<Output = O>>(
        mut self,
        work: &W,
        selection: &Selection,
    ) -> Result<Batch<O>, RunError> {
        self.status.total = Some(self.status.done + selection.indices(work.len()).len());
        let batch = self.batch(work, selection)?;
        self.finish()?;
        Ok(batch)
    }

    /// Run the selected items of `work` (recalling those the checkpoint holds), in parallel;
    /// outputs in item order. A stop request ends the batch with [`RunError::Interrupted`]
    /// once the items in progress are recorded.
    pub fn batch<W: WorkList<Output = O>>(
        &mut self,
        work: &W,
        selection: &Selection,
    ) -> Result<Batch<O>, RunError> {
        let indices = selection.indices(work.len());
        let keys: Vec<String> = indices.iter().map(|&i| work.key(i)).collect();
        let mut slots: Vec<Option<O>> = match &self.checkpoint {
            Some(c) => keys.iter().map(|k| c.recall(k)).collect(),
            None => keys.iter().map(|_| None).collect(),
        };
        let kept = slots.iter().filter(|s| s.is_some()).count();
        let earlier = keys
            .iter()
            .zip(&slots)
            .filter(|(k, s)| s.is_some() && !self.finished.contains(*k))
            .count();
        for (k, _) in keys.iter().zip(&slots).filter(|(_, s)| s.is_some()) {
            self.finished.insert(k.clone());
        }
        self.status.done += earlier;
        self.status.kept += earlier;
        if !self.started {
            self.started = true;
            for o in self.observers.iter_mut() {
                o.started(&self.status);
            }
        }
        let todo: Vec<usize> = (0..slots.len()).filter(|&p| slots[p].is_none()).collect();
        let computed = self.compute(work, &indices, &keys, &todo)?;
        let count = computed.iter().filter(|c| c.is_some()).count();
        if count < todo.len() {
            if !self.interrupted {
                self.interrupted = true;
                for o in self.observers.iter_mut() {
                    o.finished(&self.status, Outcome::Interrupted);
                }
            }
            return Err(RunError::Interrupted {
                done: self.status.done,
                total: self.status.total,
            });
        }
        for (p, out) in todo.into_iter().zip(computed) {
            self.finished.insert(keys[p].clone());
            slots[p] = out;
        }
        Ok(Batch {
            outputs: slots.into_iter().flatten().collect(),
            computed: count,
            kept,
        })
    }

    /// The loop over the positions `todo` of `indices`: each item computed, recorded and
    /// reported as it finishes; `None` for items not started after a stop. Lists with a
    /// wire go to the installed cluster master if there is one ([`cluster`]), others run
    /// here in parallel.
    fn compute<W: WorkList<Output = O>>(
        &mut self,
        work: &W,
        indices: &[usize],
        keys: &[String],
        todo: &[usize],
    ) -> Result<Vec<Option<O>>, RunError> {
        let stop = self.stop;
        let shared = Mutex::new(Shared {
            status: &mut self.status,
            observers: &mut self.observers,
            checkpoint: self.checkpoint.as_deref_mut(),
        });
        let finish = |p: usize, out: &O| -> Result<(), RunError> {
            let mut guard = shared.lock().unwrap_or_else(|e| e.into_inner());
            let s = &mut *guard;
            if let Some(c) = s.checkpoint.as_deref_mut() {
                c.record(&keys[p], out)?;
            }
            s.status.done += 1;
            for o in s.observers.iter_mut() {
                o.item_done(s.status);
            }
            Ok(())
        };
        if work.wire().is_some() && cluster::active() {
            let mut slots: Vec<Option<O>> = (0..keys.len()).map(|_| None).collect();
            let mut deliver = |q: usize, out: O| -> Result<(), RunError> {
                let p = todo[q];
                finish(p, &out)?;
                slots[p] = Some(out);
                Ok(())
            };
            if let Some(result) = cluster::run_distributed(work, indices, todo, stop, &mut deliver)
            {
                result?;
                return Ok(todo.iter().map(|&p| slots[p].take()).collect());
            }
        }
        todo.par_iter()
            .map(|&p| -> Result<Option<O>, RunError> {
                if stop.is_some_and(|s| s.load(Ordering::Relaxed)) {
                    return Ok(None);
                }
                let out = work.run(indices[p]);
                finish(p, &out)?;
                Ok(Some(out))
            })
            .collect()
    }

    /// The run completed: the checkpoint takes its final form and observers hear the end.
    pub fn finish(&mut self) -> Result<(), RunError> {
        if let Some(c) = self.checkpoint.as_deref_mut() {
            c.complete()?;
        }
        for o in self.observers.iter_mut() {
            o.finished(&self.status, Outcome::Completed);
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Cubes(usize);
    impl WorkList for Cubes {
        type Output = u64;
        fn len(&self) -> usize {
            self.0
        }
        fn key(&self, index: usize) -> String {
            index.to_string()
        }
        fn run(&self, index: usize) -> u64 {
            (index as u64).pow(3)
        }
    }

    #[test]
    fn shards_partition_the_list() {
        let all = Selection::All.indices(10);
        let mut joined: Vec<usize> = (0..3)
            .flat_map(|k| Selection::shard(k, 3).unwrap().indices(10))
            .collect();
        joined.sort_unstable();
        assert_eq!(joined, all);
        assert!(Selection::shard(3, 3).is_none());
        assert_eq!(
            Selection::Indices(vec![4, 1, 4, 99]).indices(10),
            vec![1, 4]
        );
    }

    #[test]
    fn a_set_stop_flag_runs_nothing_and_says_so() {
        let stop = AtomicBool::new(true);
        let e = Executor::new("cubes", "numbers")
            .stop_when(&stop)
            .run(&Cubes(4), &Selection::All)
            .unwrap_err();
        assert_eq!(
            e,
            RunError::Interrupted {
                done: 0,
                total: Some(4)
            }
        );
    }

    /// A checkpoint in memory.
    #[derive(Default)]
    struct Memory(std::collections::HashMap<String, u64>);
    impl Checkpoint<u64> for Memory {
        fn recall(&self, key: &str) -> Option<u64> {
            self.0.get(key).copied()
        }
        fn record(&mut self, key: &str, output: &u64) -> Result<(), CheckpointError> {
            self.0.insert(key.to_string(), *output);
            Ok(())
        }
        fn complete(&mut self) -> Result<(), CheckpointError> {
            Ok(())
        }
    }

    #[test]
    fn an_item_asked_for_again_is_recalled_and_counted_once() {
        let mut earlier = Memory::default();
        earlier.0.insert("0".into(), 0);
        let mut exec = Executor::new("cubes", "numbers").checkpoint(&mut earlier);
        let first = exec.batch(&Cubes(3), &Selection::All).unwrap();
        assert_eq!((first.computed, first.kept), (2, 1));
        let again = exec
            .batch(&Cubes(5), &Selection::Indices(vec![2, 3]))
            .unwrap();
        assert_eq!(again.outputs, vec![8, 27]);
        assert_eq!(again.computed, 1);
        // Four distinct items (0 to 3), one of them kept from the earlier run.
        assert_eq!((exec.status().done, exec.status().kept), (4, 1));
    }

    #[test]
    fn outputs_are_in_item_order_at_any_thread_count() {
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| {
                Executor::new("cubes", "numbers")
                    .run(&Cubes(200), &Selection::All)
                    .unwrap()
            });
        let many = Executor::new("cubes", "numbers")
            .run(&Cubes(200), &Selection::All)
            .unwrap();
        assert_eq!(one, many);
        assert_eq!(many.outputs[7], 343);
    }
}
