//! The cluster protocol ([`super::cluster`]) over MPI (the `mpi` feature): rank 0 is the
//! master, every other rank a worker.
//!
//! Messages are byte strings ([`super::cluster::chunk_bytes`], [`super::cluster::reply_bytes`]):
//! rank 0 sends a chunk or the end of the program (`E`) with tag 1; a worker answers with
//! tag 2. Only the thread that runs a batch on rank 0 calls MPI (the executor's
//! own computing thread does not), so MPI is initialised at the `Serialized` level.
//!
//! Waiting workers poll for the next message with a growing sleep (up to 2 ms) instead of a
//! blocking receive: Open MPI's blocking receive spins a core, which a worker waiting while
//! rank 0 does work of its own would take from the ranks that compute.

use super::cluster::{
    chunk_bytes, read_chunk, read_reply, reply_bytes, Chunk, Master, Reply, WorkerLink,
};
use mpi::point_to_point::MatchedReceiveVec;
use mpi::topology::SimpleCommunicator;
use mpi::traits::*;
use std::time::Duration;

const TO_WORKER: i32 = 1;
const TO_MASTER: i32 = 2;

/// An MPI job this process belongs to (MPI is finalised when it is dropped).
pub struct Job {
    _universe: mpi::environment::Universe,
    rank: usize,
    size: usize,
}

/// Whether this process was started by an MPI launcher (`mpirun`, `mpiexec`, `srun`): the
/// launchers' environment variables (Open MPI's `OMPI_COMM_WORLD_SIZE`, PMI's `PMI_SIZE`,
/// PMIx's `PMIX_RANK`).
pub fn launched() -> bool {
    ["OMPI_COMM_WORLD_SIZE", "PMI_SIZE", "PMIX_RANK"]
        .iter()
        .any(|v| std::env::var_os(v).is_some())
}

/// Join the MPI job, if this process was started by an MPI launcher and MPI initialises;
/// `None` otherwise (a process on its own).
pub fn join() -> Option<Job> {
    if !launched() {
        return None;
    }
    let (universe, _) = mpi::initialize_with_threading(mpi::Threading::Serialized)?;
    let world = universe.world();
    let (rank, size) = (world.rank() as usize, world.size() as usize);
    Some(Job {
        _universe: universe,
        rank,
        size,
    })
}

impl Job {
    /// This process's rank, from 0.
    pub fn rank(&self) -> usize {
        self.rank
    }

    /// The number of processes.
    pub fn size(&self) -> usize {
        self.size
    }

    /// Rank 0's end of the messages ([`super::cluster::install`] it).
    pub fn master(&self) -> Box<dyn Master> {
        Box::new(MpiMaster {
            workers: self.size.saturating_sub(1),
        })
    }

    /// A worker's end of the messages ([`super::cluster::serve`] on it).
    pub fn link(&self) -> MpiWorker {
        MpiWorker { _private: () }
    }
}

fn world() -> SimpleCommunicator {
    SimpleCommunicator::world()
}

/// Rank 0's end.
struct MpiMaster {
    workers: usize,
}

impl Master for MpiMaster {
    fn workers(&self) -> usize {
        self.workers
    }

    fn send(&mut self, worker: usize, chunk: &Chunk) {
        let bytes = chunk_bytes(chunk);
        world()
            .process_at_rank(worker as i32 + 1)
            .send_with_tag(&bytes[..], TO_WORKER);
    }

    fn try_receive(&mut self) -> Option<(usize, Reply)> {
        let probed = world()
            .any_process()
            .immediate_matched_probe_with_tag(TO_MASTER)?;
        let (bytes, status) = probed.matched_receive_vec::<u8>();
        let worker = (status.source_rank() as usize).checked_sub(1)?;
        Some((worker, read_reply(&bytes)))
    }

    fn end(&mut self) {
        for w in 0..self.workers {
            world()
                .process_at_rank(w as i32 + 1)
                .send_with_tag(&b"E"[..], TO_WORKER);
        }
    }
}

/// A worker's end.
pub struct MpiWorker {
    _private: (),
}

impl WorkerLink for MpiWorker {
    fn receive(&mut self) -> Option<Chunk> {
        let mut wait = Duration::from_micros(20);
        loop {
            if let Some(probed) = world()
                .process_at_rank(0)
                .immediate_matched_probe_with_tag(TO_WORKER)
            {
                let (bytes, _) = probed.matched_receive_vec::<u8>();
                return read_chunk(&bytes);
            }
            std::thread::sleep(wait);
            wait = (wait * 2).min(Duration::from_millis(2));
        }
    }

    fn reply(&mut self, reply: Reply) {
        let bytes = reply_bytes(&reply);
        world()
            .process_at_rank(0)
            .send_with_tag(&bytes[..], TO_MASTER);
    }
}
