//! Several sequential searches run side by side, their function evaluations batched.
//!
//! A root search asks for one value at a time, and the next value depends on the last. A few
//! independent searches over an expensive function (a bound's ends, each a chain of nuisance
//! searches) would run one after the other and each evaluation alone. [`in_lockstep`] runs
//! each search on its own thread, where asking for a value blocks; once every search still
//! running has asked (or finished), the values asked for are evaluated together by one call
//! of `batch` (which may evaluate them in parallel), and each search gets its answer. The
//! batches depend only on the searches, never on timing: a round holds exactly one request
//! of every search still running, in the searches' order.

use std::sync::{mpsc, Mutex};

/// What a search thread tells the coordinator.
enum Message<X> {
    /// Search `index` asks for the value at `X`.
    Ask(usize, X),
    /// A search has finished (or unwound).
    Done,
}

/// Sends [`Message::Done`] when the search ends, also when it unwinds.
struct DoneOnDrop<X> {
    to_coordinator: mpsc::Sender<Message<X>>,
}

impl<X> Drop for DoneOnDrop<X> {
    fn drop(&mut self) {
        // The coordinator outlives every search thread: the send cannot fail while it waits.
        let _ = self.to_coordinator.send(Message::Done);
    }
}

/// A search: given the function to ask values of, it returns its result.
pub(crate) type LockstepSearch<'s, X, Y, R> =
    Box<dyn FnOnce(&mut dyn FnMut(X) -> Y) -> R + Send + 's>;

/// The search in `slot`, taken out (each search runs once).
fn take_search<'s, X, Y, R>(
    slot: &Mutex<Option<LockstepSearch<'s, X, Y, R>>>,
) -> LockstepSearch<'s, X, Y, R> {
    slot.lock()
        .unwrap_or_else(|e| e.into_inner())
        .take()
        .expect("each search runs once")
}

/// Run `searches` in lockstep, each round's requests evaluated by one call of `batch` (the
/// values in the order of the searches that asked, one answer per value, in that order).
/// Returns the searches' results in their order. A search whose thread cannot be started
/// runs afterwards on the caller's thread, one value per batch (the same result: a search's
/// answers depend only on its values).
///
/// # Panics
/// If a search panics (after the others finished), or if `batch` returns a different number
/// of answers than values.
pub(crate) fn in_lockstep<'s, X, Y, R>(
    searches: Vec<LockstepSearch<'s, X, Y, R>>,
    mut batch: impl FnMut(&[X]) -> Vec<Y>,
) -> Vec<R>
where
    X: Send,
    Y: Send,
    R: Send,
{
    let count = searches.len();
    // Each search is taken by its thread; one whose thread did not start stays here.
    let slots: Vec<Mutex<Option<LockstepSearch<'s, X, Y, R>>>> =
        searches.into_iter().map(|s| Mutex::new(Some(s))).collect();
    let (to_coordinator, inbox) = mpsc::channel::<Message<X>>();
    std::thread::scope(|scope| {
        let mut replies = Vec::with_capacity(count);
        let mut handles = Vec::with_capacity(count);
        for (index, slot) in slots.iter().enumerate() {
            let (reply, answers) = mpsc::channel::<Y>();
            replies.push(reply);
            let to_coordinator = to_coordinator.clone();
            let spawned = std::thread::Builder::new().spawn_scoped(scope, move || {
                let done = DoneOnDrop { to_coordinator };
                let search = take_search(slot);
                let mut ask = |x: X| -> Y {
                    done.to_coordinator
                        .send(Message::Ask(index, x))
                        .expect("the coordinator waits for every search");
                    answers
                        .recv()
                        .expect("the coordinator answers every request of a running search")
                };
                search(&mut ask)
            });
            handles.push(spawned.ok());
        }
        drop(to_coordinator);
        let mut running = handles.iter().filter(|h| h.is_some()).count();
        let mut asked: Vec<Option<X>> = (0..count).map(|_| None).collect();
        let mut waiting = 0;
        while running > 0 {
            // Every running search either asks once or finishes before the round is evaluated.
            while waiting < running {
                match inbox.recv() {
                    Ok(Message::Ask(i, x)) => {
                        asked[i] = Some(x);
                        waiting += 1;
                    }
                    Ok(Message::Done) => running -= 1,
                    // Not reached: a search thread says Done before its sender is dropped.
                    Err(_) => running = waiting,
                }
            }
            if waiting == 0 {
                break;
            }
            let (who, xs): (Vec<usize>, Vec<X>) = asked
                .iter_mut()
                .enumerate()
                .filter_map(|(i, x)| x.take().map(|x| (i, x)))
                .unzip();
            let ys = batch(&xs);
            assert_eq!(ys.len(), xs.len(), "one answer per value asked for");
            for (i, y) in who.into_iter().zip(ys) {
                // A search that asked waits for its answer.
                let _ = replies[i].send(y);
            }
            waiting = 0;
        }
        handles
            .into_iter()
            .zip(&slots)
            .map(|(handle, slot)| match handle {
                Some(h) => match h.join() {
                    Ok(r) => r,
                    Err(panic) => std::panic::resume_unwind(panic),
                },
                None => take_search(slot)(&mut |x: X| {
                    let mut ys = batch(std::slice::from_ref(&x));
                    assert_eq!(ys.len(), 1, "one answer per value asked for");
                    ys.remove(0)
                }),
            })
            .collect()
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numerics::brent_root;

    /// Three bisections of different lengths: the results are each search's alone, the
    /// rounds hold one request of every running search, in order.
    #[test]
    fn searches_keep_their_results_and_rounds_follow_the_searches() {
        let targets = [0.3, 0.7, 0.11];
        let steps = [3usize, 5, 1];
        let searches: Vec<LockstepSearch<f64, f64, f64>> = targets
            .iter()
            .zip(steps)
            .map(|(&t, n)| {
                Box::new(move |f: &mut dyn FnMut(f64) -> f64| {
                    let (mut lo, mut hi) = (0.0, 1.0);
                    for _ in 0..n {
                        let mid = 0.5 * (lo + hi);
                        if f(mid) - t < 0.0 {
                            lo = mid;
                        } else {
                            hi = mid;
                        }
                    }
                    0.5 * (lo + hi)
                }) as LockstepSearch<f64, f64, f64>
            })
            .collect();
        let mut rounds = Vec::new();
        let results = in_lockstep(searches, |xs| {
            rounds.push(xs.to_vec());
            xs.to_vec()
        });
        // Alone: bisection of x − t on [0, 1] after n steps.
        assert_eq!(results, vec![0.3125, 0.703125, 0.25]);
        assert_eq!(rounds.len(), 5);
        assert_eq!(rounds[0], vec![0.5, 0.5, 0.5]);
        assert_eq!(rounds[1], vec![0.25, 0.75]);
        assert_eq!(rounds[2], vec![0.375, 0.625]);
        assert_eq!(rounds[3], vec![0.6875]);
        assert_eq!(rounds[4], vec![0.71875]);
    }

    /// Brent's method in lockstep finds the same roots, bit for bit, as alone; no search
    /// and an empty batch sequence work.
    #[test]
    fn brent_in_lockstep_equals_brent_alone() {
        let shifts = [0.2, 1.3, 2.9, 0.05];
        let alone: Vec<f64> = shifts
            .iter()
            .map(|&s| brent_root(|x: f64| x.cos() - s / 3.0, 0.0, 3.0, 1e-13).unwrap())
            .collect();
        let searches: Vec<LockstepSearch<f64, f64, f64>> = shifts
            .iter()
            .map(|&s| {
                Box::new(move |f: &mut dyn FnMut(f64) -> f64| {
                    brent_root(|x| f(x) - s / 3.0, 0.0, 3.0, 1e-13).unwrap()
                }) as LockstepSearch<f64, f64, f64>
            })
            .collect();
        let mut calls = 0;
        let together = in_lockstep(searches, |xs| {
            calls += 1;
            xs.iter().map(|x| x.cos()).collect()
        });
        assert_eq!(together, alone);
        assert!(calls > 1);
        let none: Vec<f64> = in_lockstep(Vec::<LockstepSearch<f64, f64, f64>>::new(), |_| {
            panic!("nothing to evaluate")
        });
        assert!(none.is_empty());
    }

    /// A search that panics does not hang the others; the panic reaches the caller.
    #[test]
    fn a_panicking_search_is_reported() {
        let searches: Vec<LockstepSearch<f64, f64, f64>> = vec![
            Box::new(|f: &mut dyn FnMut(f64) -> f64| f(1.0) + f(2.0)),
            Box::new(|_: &mut dyn FnMut(f64) -> f64| panic!("search failed")),
        ];
        let outcome = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            in_lockstep(searches, |xs| xs.to_vec())
        }));
        assert!(outcome.is_err());
    }
}
