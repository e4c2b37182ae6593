//! How fast rank 0 of an MPI job serves work (the `mpi` feature), for the scaling model of
//! docs/cluster.md: `mpirun -np 2 target/release/examples/cluster_handout`.
//!
//! 1. Round trips: rank 0 sends one-item chunks of a trivial list to each worker and waits
//!    for every reply before the next round; the time per round trip bounds the messages per
//!    second rank 0 handles.
//! 2. Hand-out: the executor runs 200 000 trivial items (each output a short JSON number)
//!    with the guided chunks, rank 0 computing too; items per second is the most rank 0 serves
//!    when the items cost nothing.

use std::time::Instant;
use umbral::run::cluster::{self, Chunk, Reply, Wire};
use umbral::run::{Executor, Selection, WorkList};

/// Item i's output is 2i.
struct Trivial(usize);

impl WorkList for Trivial {
    type Output = u64;
    fn len(&self) -> usize {
        self.0
    }
    fn key(&self, index: usize) -> String {
        index.to_string()
    }
    fn run(&self, index: usize) -> u64 {
        2 * index as u64
    }
    fn wire(&self) -> Option<&dyn Wire<u64>> {
        Some(self)
    }
}

impl Wire<u64> for Trivial {
    fn id(&self) -> String {
        format!("trivial {}", self.0)
    }
    fn encode(&self, o: &u64) -> String {
        o.to_string()
    }
    fn decode(&self, t: &str) -> Result<u64, String> {
        t.parse().map_err(|e| format!("{e}"))
    }
}

const ITEMS: usize = 200_000;
const ROUNDS: usize = 20_000;

fn main() {
    let Some(job) = umbral::run::mpi::join() else {
        eprintln!("start this under mpirun (-np 2 or more)");
        std::process::exit(2);
    };
    let list = Trivial(ITEMS);
    if job.rank() != 0 {
        let served = cluster::served(Trivial(ITEMS))
            .into_iter()
            .collect::<Vec<_>>();
        let lists: Vec<&dyn cluster::Served> = served.iter().map(|s| s.as_ref()).collect();
        cluster::serve(&mut job.link(), &lists);
        return;
    }
    let mut master = job.master();
    let workers = master.workers();
    let id = Wire::id(&list);
    let start = Instant::now();
    for round in 0..ROUNDS {
        for w in 0..workers {
            let chunk = Chunk {
                id: id.clone(),
                indices: vec![round % ITEMS],
            };
            master.send(w, &chunk);
        }
        let mut back = 0;
        while back < workers {
            if let Some((_, reply)) = master.try_receive() {
                assert!(matches!(reply, Reply::Done(_)));
                back += 1;
            }
        }
    }
    let seconds = start.elapsed().as_secs_f64();
    let messages = (ROUNDS * workers) as f64;
    println!(
        "round trips: {ROUNDS} rounds to {workers} workers in {seconds:.3} s: {:.1} us per \
         round trip, {:.0} chunks per second",
        1e6 * seconds / ROUNDS as f64,
        messages / seconds
    );
    cluster::install(master);
    let start = Instant::now();
    let batch = Executor::new("trivial", "items")
        .run(&list, &Selection::All)
        .expect("a run without a checkpoint or stop flag completes");
    let seconds = start.elapsed().as_secs_f64();
    assert!(batch
        .outputs
        .iter()
        .enumerate()
        .all(|(i, &o)| o == 2 * i as u64));
    println!(
        "hand-out: {ITEMS} trivial items in {seconds:.3} s: {:.0} items per second \
         ({} threads per rank)",
        ITEMS as f64 / seconds,
        rayon::current_num_threads()
    );
    cluster::shutdown();
}
