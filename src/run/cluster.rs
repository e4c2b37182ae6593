//! Runs past one process: the executor's items handed out to other processes (the ranks of an
//! MPI job) and their outputs brought back, byte for byte.
//!
//! A work list that can travel says so through [`WorkList::wire`](super::WorkList::wire): a
//! [`Wire`] gives the list's identity (a digest of everything its items depend on) and
//! encodes one output as JSON text (serde_json with `float_roundtrip`, so every `f64` comes
//! back with the same bits), the same text a checkpoint records. A program that has other
//! processes at hand installs a [`Master`] ([`install`]); from then on
//! [`Executor::batch`](super::Executor::batch) hands the items of such a list out in chunks
//! ([`distribute`]): the master process computes chunks itself on its own threads while it
//! answers the workers, records every output in its checkpoint and tells its observers as
//! the outputs arrive, and honours the stop flag (no new chunk goes out; the chunks out are
//! collected). Each worker process builds the same work lists from the same arguments and
//! [`serve`]s chunks of indices: an index is all it needs.
//!
//! **Chunks** are guided (Polychronopoulos & Kuck 1987, "Guided self-scheduling", IEEE Trans.
//! Computers C-36, 1425): a chunk is the remaining items over twice the number of
//! processes, at least the master's thread count (a worker runs its chunk on its own threads)
//! and at most [`MAX_CHUNK_PER_THREAD`] times that: large chunks while much is left (few
//! messages), small ones at the end (no process waits long for a slow last chunk; a process
//! that dies loses one chunk at most).
//!
//! A worker that does not know a list (it could not build it) answers
//! [`Reply::Unknown`]; its chunk is computed by the others and it gets no more of that batch.
//! Lists without a wire run on the master alone, as before.
//!
//! The protocol is tested without MPI in this module (workers on threads, messages through
//! channels); `src/run/mpi.rs` carries it over MPI.

use super::RunError;
use std::collections::VecDeque;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Mutex};
use std::time::Duration;

/// How the outputs of a work list travel between processes and files.
pub trait Wire<O>: Sync {
    /// The list's identity: the same in every process for the same arguments and umbral
    /// version, different for another list (a hexadecimal digest of its arguments).
    fn id(&self) -> String;
    /// One output as JSON text, every number bit-exact.
    fn encode(&self, output: &O) -> String;
    /// The output [`Wire::encode`] wrote as `text`.
    fn decode(&self, text: &str) -> Result<O, String>;
}

/// What a worker sends back for a chunk.
#[derive(Debug, Clone, PartialEq)]
pub enum Reply {
    /// The chunk's outputs, encoded, in the chunk's order.
    Done(Vec<String>),
    /// The worker does not know the work list.
    Unknown,
}

/// A chunk of work as a worker receives it.
#[derive(Debug, Clone, PartialEq)]
pub struct Chunk {
    /// The work list's [`Wire::id`].
    pub id: String,
    /// Item indices, increasing.
    pub indices: Vec<usize>,
}

/// The master's end of the messages to the worker processes (rank 0 of an MPI job).
pub trait Master: Send {
    /// The number of worker processes, numbered from 0.
    fn workers(&self) -> usize;
    /// Send `chunk` to `worker`.
    fn send(&mut self, worker: usize, chunk: &Chunk);
    /// The next reply of any worker with its number; `None` when none is waiting.
    fn try_receive(&mut self) -> Option<(usize, Reply)>;
    /// Tell every worker that the program ends (each is idle then).
    fn end(&mut self);
}

/// A worker's end: chunks in, replies out.
pub trait WorkerLink {
    /// The next chunk, or `None` when the program ends.
    fn receive(&mut self) -> Option<Chunk>;
    /// Answer the last chunk.
    fn reply(&mut self, reply: Reply);
}

/// A work list as a worker serves it: by identity and index, outputs as text.
pub trait Served: Sync {
    /// The list's [`Wire::id`].
    fn id(&self) -> String;
    /// The number of items.
    fn len(&self) -> usize;
    /// Whether the list is empty.
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Compute item `index` and encode its output.
    fn run_encoded(&self, index: usize) -> String;
}

/// A work list with a wire, to serve (`None` for one without).
pub fn served<'w, W: super::WorkList + 'w>(work: W) -> Option<Box<dyn Served + 'w>> {
    work.wire()?;
    Some(Box::new(Serving(work)))
}

struct Serving<W>(W);

impl<W: super::WorkList> Served for Serving<W> {
    fn id(&self) -> String {
        self.0.wire().map(|w| w.id()).unwrap_or_default()
    }
    fn len(&self) -> usize {
        self.0.len()
    }
    fn run_encoded(&self, index: usize) -> String {
        let out = self.0.run(index);
        self.0.wire().map(|w| w.encode(&out)).unwrap_or_default()
    }
}

/// Serve chunks until the master ends the program: each chunk of a known list computed on
/// this process's threads (rayon, outputs in order), each of an unknown one answered
/// [`Reply::Unknown`]. Returns the number of items computed.
pub fn serve(link: &mut dyn WorkerLink, lists: &[&dyn Served]) -> usize {
    use rayon::prelude::*;
    let ids: Vec<String> = lists.iter().map(|l| l.id()).collect();
    let mut computed = 0;
    while let Some(chunk) = link.receive() {
        let found = ids.iter().position(|id| *id == chunk.id).map(|p| lists[p]);
        match found {
            Some(list) if chunk.indices.iter().all(|&i| i < list.len()) => {
                let outs: Vec<String> = chunk
                    .indices
                    .par_iter()
                    .map(|&i| list.run_encoded(i))
                    .collect();
                computed += outs.len();
                link.reply(Reply::Done(outs));
            }
            _ => link.reply(Reply::Unknown),
        }
    }
    computed
}

fn put_u32(bytes: &mut Vec<u8>, n: usize) {
    bytes.extend_from_slice(&(n as u32).to_le_bytes());
}

/// A chunk as a message: `W`, the identity's length (u32) and bytes, the indices (u64),
/// little-endian.
pub fn chunk_bytes(chunk: &Chunk) -> Vec<u8> {
    let mut bytes = Vec::with_capacity(5 + chunk.id.len() + 8 * chunk.indices.len());
    bytes.push(b'W');
    put_u32(&mut bytes, chunk.id.len());
    bytes.extend_from_slice(chunk.id.as_bytes());
    for &i in &chunk.indices {
        bytes.extend_from_slice(&(i as u64).to_le_bytes());
    }
    bytes
}

/// Read a chunk message (`None`: the end, `E`, or a message not understood).
pub fn read_chunk(bytes: &[u8]) -> Option<Chunk> {
    let rest = bytes.strip_prefix(b"W")?;
    let n = u32::from_le_bytes(rest.get(..4)?.try_into().ok()?) as usize;
    let id = std::str::from_utf8(rest.get(4..4 + n)?).ok()?.to_string();
    let indices = rest
        .get(4 + n..)?
        .chunks_exact(8)
        .map(|b| u64::from_le_bytes(b.try_into().unwrap_or_default()) as usize)
        .collect();
    Some(Chunk { id, indices })
}

/// A reply as a message: `U` (unknown list), or `D` and each output as its length (u32,
/// little-endian) and UTF-8 text.
pub fn reply_bytes(reply: &Reply) -> Vec<u8> {
    match reply {
        Reply::Unknown => b"U".to_vec(),
        Reply::Done(outs) => {
            let mut bytes = Vec::with_capacity(1 + outs.iter().map(|o| 4 + o.len()).sum::<usize>());
            bytes.push(b'D');
            for o in outs {
                put_u32(&mut bytes, o.len());
                bytes.extend_from_slice(o.as_bytes());
            }
            bytes
        }
    }
}

/// Read a reply (a damaged one reads as [`Reply::Unknown`]: the chunk is computed elsewhere).
pub fn read_reply(bytes: &[u8]) -> Reply {
    let Some(mut rest) = bytes.strip_prefix(b"D") else {
        return Reply::Unknown;
    };
    let mut outs = Vec::new();
    while !rest.is_empty() {
        let Some(n) = rest.get(..4).and_then(|b| b.try_into().ok()) else {
            return Reply::Unknown;
        };
        let n = u32::from_le_bytes(n) as usize;
        let Some(text) = rest.get(4..4 + n).and_then(|t| std::str::from_utf8(t).ok()) else {
            return Reply::Unknown;
        };
        outs.push(text.to_string());
        rest = &rest[4 + n..];
    }
    Reply::Done(outs)
}

/// Chunks are at most this many items per thread of the master.
pub const MAX_CHUNK_PER_THREAD: usize = 16;

/// The guided chunk size for `remaining` items shared by `processes` processes of `threads`
/// threads each.
///
/// ```
/// use umbral::run::cluster::chunk_size;
/// assert_eq!(chunk_size(1000, 2, 2), 32); // capped at 16 per thread
/// assert_eq!(chunk_size(40, 2, 2), 10);
/// assert_eq!(chunk_size(3, 2, 2), 2); // at least one item per thread
/// assert_eq!(chunk_size(1, 2, 2), 1);
/// ```
pub fn chunk_size(remaining: usize, processes: usize, threads: usize) -> usize {
    let threads = threads.max(1);
    let guided = remaining.div_ceil(2 * processes.max(1));
    guided
        .clamp(threads, MAX_CHUNK_PER_THREAD * threads)
        .min(remaining)
}

/// The installed master, if this process leads a job of several processes.
static MASTER: Mutex<Option<Box<dyn Master>>> = Mutex::new(None);

/// Make this process the master of a job: from now on, work lists with a wire are handed out
/// through `master` (a job of one process, with no workers, installs nothing).
pub fn install(master: Box<dyn Master>) {
    if master.workers() > 0 {
        *MASTER.lock().unwrap_or_else(|e| e.into_inner()) = Some(master);
    }
}

/// End the job: the workers are told to stop, and work lists run here alone again.
pub fn shutdown() {
    if let Some(mut m) = MASTER.lock().unwrap_or_else(|e| e.into_inner()).take() {
        m.end();
    }
}

/// Whether a master is installed.
pub fn active() -> bool {
    MASTER.lock().unwrap_or_else(|e| e.into_inner()).is_some()
}

/// Run `todo` (positions into `indices`) with the installed master, if there is one and the
/// list has a wire; `None` otherwise (run them here).
pub(super) fn run_distributed<W: super::WorkList>(
    work: &W,
    indices: &[usize],
    todo: &[usize],
    stop: Option<&AtomicBool>,
    deliver: &mut dyn FnMut(usize, W::Output) -> Result<(), RunError>,
) -> Option<Result<(), RunError>>
where
    W::Output: Send,
{
    let wire = work.wire()?;
    let mut guard = MASTER.lock().unwrap_or_else(|e| e.into_inner());
    let master = guard.as_deref_mut()?;
    Some(distribute(master, work, wire, indices, todo, stop, deliver))
}

/// What the master's own computing thread shares with the loop that answers workers.
struct Dispenser {
    /// Positions returned by a worker that did not know the list, handed out first.
    returned: VecDeque<Vec<usize>>,
    /// The next position of `todo` not yet handed out.
    next: usize,
}

/// The master's loop over one batch: chunks of `todo` (positions into `indices`) to the
/// workers and to this process's own thread, each output passed to `deliver` (position,
/// output) as it arrives; returns once every chunk handed out is back. A stop request (or a
/// failed delivery) hands out nothing more; the caller sees which positions were delivered.
pub fn distribute<W: super::WorkList>(
    master: &mut dyn Master,
    work: &W,
    wire: &dyn Wire<W::Output>,
    indices: &[usize],
    todo: &[usize],
    stop: Option<&AtomicBool>,
    deliver: &mut dyn FnMut(usize, W::Output) -> Result<(), RunError>,
) -> Result<(), RunError>
where
    W::Output: Send,
{
    let id = wire.id();
    let threads = rayon::current_num_threads();
    let processes = master.workers() + 1;
    let dispenser = Mutex::new(Dispenser {
        returned: VecDeque::new(),
        next: 0,
    });
    let halt = AtomicBool::new(false);
    let stopped =
        || halt.load(Ordering::Relaxed) || stop.is_some_and(|s| s.load(Ordering::Relaxed));
    let take = || -> Option<Vec<usize>> {
        if stopped() {
            return None;
        }
        let mut d = dispenser.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(back) = d.returned.pop_front() {
            return Some(back);
        }
        let remaining = todo.len() - d.next;
        if remaining == 0 {
            return None;
        }
        let n = chunk_size(remaining, processes, threads);
        let chunk: Vec<usize> = (d.next..d.next + n).collect();
        d.next += n;
        Some(chunk)
    };
    let mut failure: Option<RunError> = None;
    let mut accept = |position: usize, out: W::Output, failure: &mut Option<RunError>| {
        if failure.is_none() {
            if let Err(e) = deliver(position, out) {
                *failure = Some(e);
                halt.store(true, Ordering::Relaxed);
            }
        }
    };
    // Chunks out at each worker (positions); `None` when idle. Workers that did not know the
    // list get nothing more of this batch.
    let mut out: Vec<Option<Vec<usize>>> = vec![None; master.workers()];
    let mut unknown = vec![false; master.workers()];
    let send = |master: &mut dyn Master, w: usize, positions: &[usize]| {
        let chunk = Chunk {
            id: id.clone(),
            indices: positions.iter().map(|&p| indices[todo[p]]).collect(),
        };
        master.send(w, &chunk);
    };
    std::thread::scope(|scope| {
        let (tx, rx) = mpsc::channel::<Vec<(usize, W::Output)>>();
        let take_local = &take;
        let local = scope.spawn(move || {
            use rayon::prelude::*;
            while let Some(chunk) = take_local() {
                let outs: Vec<(usize, W::Output)> = chunk
                    .par_iter()
                    .map(|&p| (p, work.run(indices[todo[p]])))
                    .collect();
                if tx.send(outs).is_err() {
                    break;
                }
            }
        });
        for (w, slot) in out.iter_mut().enumerate() {
            if let Some(chunk) = take() {
                send(master, w, &chunk);
                *slot = Some(chunk);
            }
        }
        let mut local_done = false;
        loop {
            let mut busy = false;
            loop {
                match rx.try_recv() {
                    Ok(outs) => {
                        busy = true;
                        for (p, o) in outs {
                            accept(p, o, &mut failure);
                        }
                    }
                    Err(mpsc::TryRecvError::Empty) => break,
                    Err(mpsc::TryRecvError::Disconnected) => {
                        local_done = true;
                        break;
                    }
                }
            }
            while let Some((w, reply)) = master.try_receive() {
                busy = true;
                let Some(chunk) = out.get_mut(w).and_then(Option::take) else {
                    continue; // a reply nobody asked for: ignored
                };
                let decoded: Option<Vec<W::Output>> = match reply {
                    Reply::Done(texts) if texts.len() == chunk.len() => {
                        texts.iter().map(|t| wire.decode(t).ok()).collect()
                    }
                    _ => None,
                };
                match decoded {
                    Some(outs) => {
                        for (&p, o) in chunk.iter().zip(outs) {
                            accept(p, o, &mut failure);
                        }
                    }
                    None => {
                        // Unknown list or unreadable outputs: the others compute the chunk.
                        unknown[w] = true;
                        dispenser
                            .lock()
                            .unwrap_or_else(|e| e.into_inner())
                            .returned
                            .push_back(chunk);
                        // The local thread may have ended already: it is restarted below.
                    }
                }
                if !unknown[w] {
                    if let Some(next) = take() {
                        send(master, w, &next);
                        out[w] = Some(next);
                    }
                }
            }
            let outstanding = out.iter().any(Option::is_some);
            let returned_waiting = !stopped()
                && !dispenser
                    .lock()
                    .unwrap_or_else(|e| e.into_inner())
                    .returned
                    .is_empty();
            if local_done && returned_waiting {
                // The local thread ended before a chunk came back unknown: compute it here.
                while let Some(chunk) = take() {
                    use rayon::prelude::*;
                    let outs: Vec<(usize, W::Output)> = chunk
                        .par_iter()
                        .map(|&p| (p, work.run(indices[todo[p]])))
                        .collect();
                    for (p, o) in outs {
                        accept(p, o, &mut failure);
                    }
                }
                continue;
            }
            if local_done && !outstanding {
                break;
            }
            if !busy {
                std::thread::sleep(Duration::from_micros(100));
            }
        }
        let _ = local.join();
    });
    match failure {
        Some(e) => Err(e),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::run::{Executor, Selection, WorkList};
    use std::sync::mpsc::{Receiver, Sender};

    /// Squares with a wire; items whose index is a multiple of 7 are slow.
    struct Squares {
        n: usize,
        tag: &'static str,
    }
    impl WorkList for Squares {
        type Output = f64;
        fn len(&self) -> usize {
            self.n
        }
        fn key(&self, index: usize) -> String {
            index.to_string()
        }
        fn run(&self, index: usize) -> f64 {
            if index.is_multiple_of(7) {
                std::thread::sleep(Duration::from_millis(2));
            }
            (index as f64).sqrt() / 3.0
        }
        fn wire(&self) -> Option<&dyn Wire<f64>> {
            Some(self)
        }
    }
    impl Wire<f64> for Squares {
        fn id(&self) -> String {
            format!("squares {} {}", self.tag, self.n)
        }
        fn encode(&self, o: &f64) -> String {
            serde_json::to_string(o).unwrap()
        }
        fn decode(&self, t: &str) -> Result<f64, String> {
            serde_json::from_str(t).map_err(|e| e.to_string())
        }
    }

    /// Workers on threads, messages through channels.
    struct Threads {
        to: Vec<Sender<Option<Chunk>>>,
        from: Receiver<(usize, Reply)>,
        sent: Vec<usize>,
    }
    impl Master for Threads {
        fn workers(&self) -> usize {
            self.to.len()
        }
        fn send(&mut self, w: usize, chunk: &Chunk) {
            self.sent[w] += chunk.indices.len();
            self.to[w].send(Some(chunk.clone())).unwrap();
        }
        fn try_receive(&mut self) -> Option<(usize, Reply)> {
            self.from.try_recv().ok()
        }
        fn end(&mut self) {
            for t in &self.to {
                let _ = t.send(None);
            }
        }
    }
    struct Link {
        w: usize,
        from: Receiver<Option<Chunk>>,
        to: Sender<(usize, Reply)>,
    }
    impl WorkerLink for Link {
        fn receive(&mut self) -> Option<Chunk> {
            self.from.recv().ok().flatten()
        }
        fn reply(&mut self, reply: Reply) {
            self.to.send((self.w, reply)).unwrap();
        }
    }

    /// A master and `lists.len()` workers, worker `w` knowing the list `lists[w]`.
    fn job(lists: Vec<Squares>) -> (Threads, Vec<std::thread::JoinHandle<usize>>) {
        let (back, from) = mpsc::channel();
        let mut to = Vec::new();
        let mut handles = Vec::new();
        for (w, list) in lists.into_iter().enumerate() {
            let (tx, rx) = mpsc::channel();
            to.push(tx);
            let mut link = Link {
                w,
                from: rx,
                to: back.clone(),
            };
            handles.push(std::thread::spawn(move || {
                let served = super::served(list).unwrap();
                serve(&mut link, &[served.as_ref()])
            }));
        }
        let sent = vec![0; to.len()];
        (Threads { to, from, sent }, handles)
    }

    #[test]
    fn outputs_from_workers_equal_a_local_run_and_every_item_runs_once() {
        let list = Squares { n: 300, tag: "a" };
        let local = Executor::new("t", "items")
            .run(&list, &Selection::All)
            .unwrap();
        let (mut master, handles) = job(vec![
            Squares { n: 300, tag: "a" },
            Squares { n: 300, tag: "a" },
        ]);
        let mut got = vec![None; 300];
        distribute(
            &mut master,
            &list,
            &list,
            &(0..300).collect::<Vec<_>>(),
            &(0..300).collect::<Vec<_>>(),
            None,
            &mut |p, o| {
                assert!(got[p].is_none(), "item {p} delivered twice");
                got[p] = Some(o);
                Ok(())
            },
        )
        .unwrap();
        let sent = master.sent.clone();
        master.end();
        let computed: Vec<usize> = handles.into_iter().map(|h| h.join().unwrap()).collect();
        let got: Vec<f64> = got.into_iter().map(Option::unwrap).collect();
        let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&got), bits(&local.outputs));
        assert_eq!(computed, sent);
        assert!(
            sent.iter().all(|&s| s > 0),
            "every worker got work: {sent:?}"
        );
    }

    #[test]
    fn a_worker_without_the_list_leaves_its_chunk_to_the_others() {
        let list = Squares { n: 120, tag: "a" };
        let (mut master, handles) = job(vec![
            Squares {
                n: 120,
                tag: "other",
            },
            Squares { n: 120, tag: "a" },
        ]);
        let mut got = vec![0usize; 120];
        distribute(
            &mut master,
            &list,
            &list,
            &(0..120).collect::<Vec<_>>(),
            &(0..120).collect::<Vec<_>>(),
            None,
            &mut |p, _| {
                got[p] += 1;
                Ok(())
            },
        )
        .unwrap();
        master.end();
        let computed: Vec<usize> = handles.into_iter().map(|h| h.join().unwrap()).collect();
        assert!(got.iter().all(|&c| c == 1), "{got:?}");
        assert_eq!(computed[0], 0);
    }

    #[test]
    fn a_stop_hands_out_nothing_more_and_collects_the_chunks_out() {
        let list = Squares { n: 2000, tag: "a" };
        let (mut master, handles) = job(vec![Squares { n: 2000, tag: "a" }]);
        let stop = AtomicBool::new(false);
        let mut delivered = 0;
        distribute(
            &mut master,
            &list,
            &list,
            &(0..2000).collect::<Vec<_>>(),
            &(0..2000).collect::<Vec<_>>(),
            Some(&stop),
            &mut |_, _| {
                delivered += 1;
                if delivered == 50 {
                    stop.store(true, Ordering::Relaxed);
                }
                Ok(())
            },
        )
        .unwrap();
        let sent = master.sent[0];
        master.end();
        let computed = handles
            .into_iter()
            .map(|h| h.join().unwrap())
            .sum::<usize>();
        assert!(delivered < 2000, "the stop ended the batch early");
        // Every chunk handed out came back and was delivered.
        assert_eq!(computed, sent);
    }

    #[test]
    fn messages_read_back_as_written() {
        let chunk = Chunk {
            id: "abc".into(),
            indices: vec![3, 7, 1 << 40],
        };
        assert_eq!(read_chunk(&chunk_bytes(&chunk)), Some(chunk));
        assert_eq!(read_chunk(b"E"), None);
        let reply = Reply::Done(vec!["{\"x\":1.5}".into(), String::new(), "ü".into()]);
        assert_eq!(read_reply(&reply_bytes(&reply)), reply);
        assert_eq!(read_reply(&reply_bytes(&Reply::Unknown)), Reply::Unknown);
        assert_eq!(read_reply(b"D\x05\x00\x00\x00ab"), Reply::Unknown);
    }
}
