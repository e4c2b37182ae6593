//! Neighbour seeding: the curve's screen lines in levels, each bracketed from a prediction by
//! the lines already finished.
//!
//! Every `anchor_every`-th line (the anchors) is scanned and refined in full
//! ([`super::Tracer::boundary_along_line`]; with more than 64 angles, every ⌈n/16⌉-th,
//! [`anchor_stride`]). The other lines follow in levels of halving stride, rounded down
//! (with the default 4: the lines k ≡ 2 mod 4, then the odd ones); each starts from
//! the crossing predicted by Lagrange interpolation in the screen angle through the four
//! nearest finished lines on either side (septic; lines at most three anchor spacings and
//! less than half the circle away, so on a line of the first level only three), with a
//! first bracket of half-width twice the difference between that polynomial and the one
//! through one line fewer on either side (the usual estimate of an
//! interpolant's error by the next lower order; e.g. Press et al., *Numerical Recipes*, 3rd
//! ed., §3.2). With only two finished lines on a side, the cubic through them is the
//! prediction and its difference from the linear interpolation between the nearest two the
//! estimate. Measured on a Johannsen–Psaltis curve of 256 points (a = 0.5, ε₃ = 0, 60°)
//! with an anchor every 4th angle, before the septic: the quintic of the last level is within
//! 4e-9 M of the traced crossing, the cubic within 1.2e-7 M. Bisection and the
//! winding-guided refinement then proceed as on a scanned line (with strict rays throughout,
//! and guided from the first bracket on by the winding law interpolated between the nearest
//! finished lines on either side that have one), so the crossing is as accurate as before.
//! When a law guides it, the first bracket is at least as wide as the distance of the
//! photon-orbit check's middle rays ([`super::Tracer::check_crossing`]): the check then takes
//! the bracket's rays instead of tracing its own, and the law-guided refinement closes the
//! wider bracket in about as many rays as bisection closes the narrower one. What a seeded
//! line does not do is the scan for further crossings along it (one loose ray where that
//! scan would have stopped must escape). Seeding is therefore used
//! only while the curve looks star-shaped: every anchor must have exactly one crossing, and a
//! line is predicted only from lines with one crossing; a line whose predicted bracket cannot
//! be confirmed within a few widenings is scanned in full after all.
//!
//! Each level depends only on the levels before it, and each line of a level is computed on
//! its own, so the result does not depend on the number of threads.

use super::{LineBoundary, SideLaws};
use std::cmp::Reverse;
use std::collections::BinaryHeap;
use std::sync::{Mutex, MutexGuard, PoisonError};

/// A line's predicted crossing (in M from the curve origin), the half-width of the first
/// bracket to try around it, and the winding law to guide its refinement.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Seed {
    /// Predicted crossing.
    pub guess: f64,
    /// Half-width of the first bracket.
    pub half_width: f64,
    /// The prediction's estimated error: its difference from the interpolant of the next
    /// lower order (`half_width` is twice that, but never below the smallest first bracket).
    pub error: f64,
    /// The winding law beside the crossing, interpolated linearly in the screen angle between
    /// the nearest finished lines on either side that have one (within the reach of the
    /// prediction), to guide the refinement.
    pub law: Option<SideLaws>,
}

/// Trace the first `traced` of `n` curve lines in levels (module docs; the numbers are in
/// `layout`): `locate(k, seed)` finds line k's crossings, scanning it in full when `seed` is
/// `None`, and `finish` then completes a line (its checks). `finish` must not change what the
/// predictions read (a line's crossings, failure and winding law), so a line can be finished
/// while the next level is predicted from it. With `mirror`, line n − k is the mirror image
/// of line k (only k ≤ n/2 are traced). `every` ≤ 1, or fewer than four anchors around the
/// curve, traces every line in full. `min_half_width` is the smallest first bracket.
///
/// The work is a queue of tasks, each taken by the next free thread, the most urgent first:
/// the lines of a level are located, each is finished once located, and the next level's
/// lines are predicted and queued once every line of the level is located. A level's lines
/// come before its finishes, and those before the next level's lines: a thread with no line
/// left to locate finishes lines instead of waiting at the end of a level, and on one thread
/// the order is level by level, every line finished before the next level starts.
///
/// With `refuses`, tracing stops after the first level whose finished lines include one that
/// `refuses` (the caller knows the curve is then refused, whatever the other lines): the tasks
/// of later levels are not started once that is known, and lines of those levels already
/// located are dropped, finished or not, so what is returned, the lines of that level and the
/// ones before, all finished, does not depend on the number of threads either.
pub(crate) fn trace_in_levels<F, G>(
    layout: Layout,
    locate: F,
    finish: G,
    refuses: Option<&(dyn Fn(&LineBoundary) -> bool + Sync)>,
) -> Levels
where
    F: Fn(usize, Option<Seed>) -> LineBoundary + Sync,
    G: Fn(&mut LineBoundary) + Sync,
{
    let levels = level_lines(&layout);
    if levels.is_empty() {
        return Levels {
            lines: Vec::new(),
            complete: true,
        };
    }
    let mut level_of = vec![0; layout.traced];
    for (level, lines) in levels.iter().enumerate() {
        for &k in lines {
            level_of[k] = level;
        }
    }
    let unlocated = levels.iter().map(Vec::len).collect();
    let queue = LineQueue {
        layout,
        levels,
        level_of,
        locate,
        finish,
        refuses,
        state: Mutex::new(QueueState {
            slots: vec![None; layout.traced],
            seeds: vec![None; layout.traced],
            finished: vec![false; layout.traced],
            ready: BinaryHeap::new(),
            unlocated,
            refused_level: None,
        }),
    };
    rayon::scope(|scope| {
        let tasks = {
            let mut state = queue.lock();
            for &k in &queue.levels[0] {
                state.ready.push(Reverse(Task::locate(0, k)));
            }
            queue.levels[0].len()
        };
        queue.spawn(scope, tasks);
    });
    let state = queue
        .state
        .into_inner()
        .unwrap_or_else(PoisonError::into_inner);
    // Every line of the levels up to the refused one (all of them without a refusal).
    let last = state.refused_level.unwrap_or(queue.levels.len() - 1);
    let lines: Vec<LineBoundary> = state
        .slots
        .into_iter()
        .zip(&queue.level_of)
        .filter(|&(_, &level)| level <= last)
        .map(|(slot, _)| slot.expect("every line of a level up to the last one is located"))
        .collect();
    debug_assert!(state
        .finished
        .iter()
        .zip(&queue.level_of)
        .all(|(&done, &level)| done || level > last));
    Levels {
        lines,
        complete: last + 1 == queue.levels.len(),
    }
}

/// The lines of each level in order: the anchors (every `every`-th, or every line without
/// seeding), then those of each halving stride, rounded down, not in a level before.
fn level_lines(layout: &Layout) -> Vec<Vec<usize>> {
    let seeding = layout.every > 1 && layout.n >= 4 * layout.every;
    let mut stride = if seeding { layout.every } else { 1 };
    let mut levels = vec![(0..layout.traced).step_by(stride).collect::<Vec<_>>()];
    while stride > 1 {
        stride /= 2;
        levels.push(
            (0..layout.traced)
                .filter(|&k| k % stride == 0 && levels.iter().all(|l| l.binary_search(&k).is_err()))
                .collect(),
        );
    }
    levels.retain(|l| !l.is_empty());
    levels
}

/// One task of [`trace_in_levels`]: locate or finish a line. Ordered by urgency (smaller
/// first): a level's lines (rank 2·level), then their finishes (2·level + 1), then the next
/// level; within a rank, in line order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
struct Task {
    rank: usize,
    line: usize,
}

impl Task {
    fn locate(level: usize, line: usize) -> Task {
        Task {
            rank: 2 * level,
            line,
        }
    }

    fn finish(level: usize, line: usize) -> Task {
        Task {
            rank: 2 * level + 1,
            line,
        }
    }

    fn level(self) -> usize {
        self.rank / 2
    }

    fn is_finish(self) -> bool {
        self.rank % 2 == 1
    }
}

/// What a task of [`trace_in_levels`] does, taken from the queue under its lock.
enum Work {
    /// Locate the line from this seed (`None`: scan it in full).
    Locate(Option<Seed>),
    /// Finish (check) this copy of the located line.
    Finish(Box<LineBoundary>),
}

/// What the threads of [`trace_in_levels`] share.
struct QueueState {
    /// Located lines (finished ones once finished).
    slots: Vec<Option<LineBoundary>>,
    /// Each seeded line's prediction, set when its level is queued.
    seeds: Vec<Option<Seed>>,
    /// Lines finished (for the check that every returned line is).
    finished: Vec<bool>,
    /// Tasks ready to run, the most urgent first.
    ready: BinaryHeap<Reverse<Task>>,
    /// Lines of each level not located yet.
    unlocated: Vec<usize>,
    /// The lowest level with a finished line that `refuses`.
    refused_level: Option<usize>,
}

/// The levels, the caller's closures and the shared state of [`trace_in_levels`].
struct LineQueue<'a, F, G> {
    layout: Layout,
    levels: Vec<Vec<usize>>,
    level_of: Vec<usize>,
    locate: F,
    finish: G,
    refuses: Option<&'a (dyn Fn(&LineBoundary) -> bool + Sync)>,
    state: Mutex<QueueState>,
}

impl<F, G> LineQueue<'_, F, G>
where
    F: Fn(usize, Option<Seed>) -> LineBoundary + Sync,
    G: Fn(&mut LineBoundary) + Sync,
{
    fn lock(&self) -> MutexGuard<'_, QueueState> {
        // The closures run outside the lock, so a panic in one cannot poison it half-updated.
        self.state.lock().unwrap_or_else(PoisonError::into_inner)
    }

    /// Spawn one job per task queued: each runs the most urgent ready task, so every task is
    /// run or skipped.
    fn spawn<'s>(&'s self, scope: &rayon::Scope<'s>, tasks: usize) {
        for _ in 0..tasks {
            scope.spawn(move |scope| self.run_next(scope));
        }
    }

    fn run_next<'s>(&'s self, scope: &rayon::Scope<'s>) {
        let (task, work) = {
            let mut state = self.lock();
            let Some(Reverse(task)) = state.ready.pop() else {
                return;
            };
            // Nothing after a refused level is started.
            if state
                .refused_level
                .is_some_and(|level| task.level() > level)
            {
                return;
            }
            let work = if task.is_finish() {
                Work::Finish(Box::new(
                    state.slots[task.line].clone().expect("a located line"),
                ))
            } else {
                Work::Locate(state.seeds[task.line])
            };
            (task, work)
        };
        let queued = match work {
            Work::Locate(seed) => self.located(task, (self.locate)(task.line, seed)),
            Work::Finish(mut line) => {
                (self.finish)(&mut line);
                let refused = self.refuses.is_some_and(|r| r(&line));
                let mut state = self.lock();
                state.slots[task.line] = Some(*line);
                state.finished[task.line] = true;
                if refused {
                    let level = task.level();
                    state.refused_level = Some(state.refused_level.map_or(level, |l| l.min(level)));
                }
                0
            }
        };
        self.spawn(scope, queued);
    }

    /// Store a located line and queue its finish, and the next level once this one is
    /// located; returns the number of tasks queued.
    fn located(&self, task: Task, line: LineBoundary) -> usize {
        let level = task.level();
        let mut state = self.lock();
        state.slots[task.line] = Some(line);
        state.ready.push(Reverse(Task::finish(level, task.line)));
        state.unlocated[level] -= 1;
        // The next level, unless this is the last or a level up to this one refused.
        if state.unlocated[level] > 0
            || level + 1 == self.levels.len()
            || state.refused_level.is_some_and(|refused| refused <= level)
        {
            return 1;
        }
        let Layout {
            n,
            mirror,
            every,
            min_half_width,
            ..
        } = self.layout;
        // Seeding only while every anchor has exactly one crossing.
        let star_shaped = self.levels[0]
            .iter()
            .all(|&k| state.slots[k].as_ref().is_some_and(single_crossing));
        let next = &self.levels[level + 1];
        for &k in next {
            let seed = star_shaped
                .then(|| predict(&state.slots, k, n, mirror, 3 * every, min_half_width))
                .flatten();
            state.seeds[k] = seed;
            state.ready.push(Reverse(Task::locate(level + 1, k)));
        }
        1 + next.len()
    }
}

/// The spacing of the anchors among `n` curve angles: every `anchor_every`-th, or, with
/// more than `anchor_every` · `max_anchors` angles, every ⌈n/`max_anchors`⌉-th, so that there
/// are at most `max_anchors` (module docs); `anchor_every` = 1 scans every angle.
pub(crate) fn anchor_stride(n: usize, anchor_every: usize, max_anchors: usize) -> usize {
    match anchor_every {
        0 | 1 => 1,
        every => every.max(n.div_ceil(max_anchors.max(1))),
    }
}

/// Which lines [`trace_in_levels`] traces, and how.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Layout {
    /// Curve angles around the curve.
    pub n: usize,
    /// The first `traced` of them are traced (the rest are mirror images).
    pub traced: usize,
    /// Line n − k is the mirror image of line k.
    pub mirror: bool,
    /// Every `every`-th line is an anchor.
    pub every: usize,
    /// The smallest first bracket of a seeded line.
    pub min_half_width: f64,
}

/// The lines [`trace_in_levels`] returns.
pub(crate) struct Levels {
    /// Every traced line in order; when not `complete`, those of the levels up to the refused
    /// one.
    pub lines: Vec<LineBoundary>,
    /// False when tracing stopped early at a line the caller refuses.
    pub complete: bool,
}

/// A converged line with exactly one crossing.
fn single_crossing(line: &LineBoundary) -> bool {
    line.failure.is_none() && line.crossings.len() == 1
}

/// The crossing of line k predicted from the four (at least two) nearest finished
/// single-crossing lines on either side within `reach` lines of it (module docs); `None`
/// without two on each side, or when
/// the predicted bracket would reach a quarter of the way to the origin (the curve is not
/// smooth on this scale).
pub(crate) fn predict(
    slots: &[Option<LineBoundary>],
    k: usize,
    n: usize,
    mirror: bool,
    reach: usize,
    min_half_width: f64,
) -> Option<Seed> {
    let n_signed = n as isize;
    let finished = |j: isize| -> Option<&LineBoundary> {
        let m = j.rem_euclid(n_signed) as usize;
        let index = if mirror && m > n / 2 { n - m } else { m };
        slots.get(index)?.as_ref().filter(|l| single_crossing(l))
    };
    let rho = |j: isize| finished(j).map(|l| l.crossings[0]);
    let k = k as isize;
    let side = |direction: isize| -> Vec<(f64, f64)> {
        (1..=(reach as isize).min((n_signed - 1) / 2))
            .map(|d| k + direction * d)
            .filter_map(|j| rho(j).map(|r| (j as f64, r)))
            .take(4)
            .collect()
    };
    let (below, above) = (side(-1), side(1));
    let pairs = below.len().min(above.len());
    if pairs < 2 {
        return None;
    }
    // The nodes in increasing angle, `pairs` on either side.
    let nodes: Vec<(f64, f64)> = below[..pairs]
        .iter()
        .rev()
        .chain(&above[..pairs])
        .copied()
        .collect();
    let x = k as f64;
    let guess = lagrange(&nodes, x);
    let lower = lagrange(&nodes[1..nodes.len() - 1], x);
    let error = (guess - lower).abs();
    let half_width = (2.0 * error).max(min_half_width);
    // The law between the nearest finished lines with one on either side (it is mirrored
    // with them).
    let law_side = |direction: isize| -> Option<(f64, SideLaws)> {
        (1..=(reach as isize).min((n_signed - 1) / 2))
            .map(|d| k + direction * d)
            .find_map(|j| finished(j).and_then(|l| l.law).map(|law| (j as f64, law)))
    };
    let law = law_side(-1).zip(law_side(1)).map(|((j0, l0), (j1, l1))| {
        let t = (x - j0) / (j1 - j0);
        let mix = |a: f64, b: f64| a + t * (b - a);
        [0, 1].map(|s| (mix(l0[s].0, l1[s].0), mix(l0[s].1, l1[s].1)))
    });
    (guess.is_finite() && half_width < 0.25 * guess).then_some(Seed {
        guess,
        half_width,
        error,
        law,
    })
}

/// The Lagrange interpolating polynomial through `nodes` (x, y), at `x`.
fn lagrange(nodes: &[(f64, f64)], x: f64) -> f64 {
    nodes
        .iter()
        .enumerate()
        .map(|(i, &(xi, yi))| {
            let weight: f64 = nodes
                .iter()
                .enumerate()
                .filter(|&(j, _)| j != i)
                .map(|(_, &(xj, _))| (x - xj) / (xi - xj))
                .product();
            weight * yi
        })
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::Ordering;

    /// 64 lines, every fourth an anchor, no mirror.
    const LAYOUT: Layout = Layout {
        n: 64,
        traced: 64,
        mirror: false,
        every: 4,
        min_half_width: 1e-6,
    };

    fn line(k: usize, n: usize, rho: f64) -> LineBoundary {
        LineBoundary {
            psi: std::f64::consts::TAU * k as f64 / n as f64,
            crossings: vec![rho],
            failure: None,
            rays: 1,
            failed_rays: 0,
            steps: 1,
            check: None,
            seeded: false,
            law: None,
            nearby: Vec::new(),
        }
    }

    /// A smooth closed curve ρ(ψ_k), ψ_k = 2πk/n.
    fn curve(k: f64, n: usize) -> f64 {
        let psi = std::f64::consts::TAU * k / n as f64;
        5.0 + 0.1 * psi.cos() + 0.02 * (2.0 * psi).cos() + 0.01 * (3.0 * psi).sin()
    }

    /// The index k of a line of `n` from its angle.
    fn index(l: &LineBoundary, n: usize) -> usize {
        (l.psi * n as f64 / std::f64::consts::TAU).round() as usize
    }

    /// A pool of `threads` threads.
    fn pool(threads: usize) -> rayon::ThreadPool {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
    }

    #[test]
    fn the_winding_law_is_interpolated_between_the_nearest_lines_and_needs_both() {
        // Line 6 of 64, halfway between lines 4 and 8: (k, c) on each side interpolated
        // linearly in the line index.
        let n = 64;
        let law = |k: usize| [(1.0 + 0.01 * k as f64, 3.0), (0.5, 2.0 + 0.1 * k as f64)];
        let mut slots: Vec<Option<LineBoundary>> = vec![None; n];
        for k in (0..n).step_by(4) {
            let mut l = line(k, n, curve(k as f64, n));
            l.law = Some(law(k));
            slots[k] = Some(l);
        }
        let seed = predict(&slots, 6, n, false, 12, 1e-12).unwrap();
        let got = seed.law.unwrap();
        let want = law(6);
        for s in 0..2 {
            assert!((got[s].0 - want[s].0).abs() < 1e-14 && (got[s].1 - want[s].1).abs() < 1e-14);
        }
        // Without a law on the nearest line of one side, the nearest line there that has one
        // (12; the law is linear in k, so the same law); without one within the reach on
        // that side, no law. The crossing is the same throughout.
        slots[8].as_mut().unwrap().law = None;
        let farther = predict(&slots, 6, n, false, 12, 1e-12).unwrap();
        let got = farther.law.unwrap();
        for s in 0..2 {
            assert!((got[s].0 - want[s].0).abs() < 1e-14 && (got[s].1 - want[s].1).abs() < 1e-14);
        }
        for k in [12, 16] {
            slots[k].as_mut().unwrap().law = None;
        }
        let without = predict(&slots, 6, n, false, 12, 1e-12).unwrap();
        assert_eq!(without.law, None);
        assert_eq!(without.guess, seed.guess);
        assert_eq!(farther.guess, seed.guess);
    }

    /// With four finished lines on either side within reach, the septic through them, and
    /// twice its difference from the quintic through the nearest three as the half-width.
    #[test]
    fn the_prediction_is_the_septic_through_four_lines_on_either_side() {
        let n = 64;
        let mut slots: Vec<Option<LineBoundary>> = vec![None; n];
        for k in (0..n).step_by(4) {
            slots[k] = Some(line(k, n, curve(k as f64, n)));
        }
        let seed = predict(&slots, 6, n, false, 16, 1e-12).unwrap();
        let nodes = |ks: &[f64]| ks.iter().map(|&k| (k, curve(k, n))).collect::<Vec<_>>();
        let septic = lagrange(&nodes(&[-8.0, -4.0, 0.0, 4.0, 8.0, 12.0, 16.0, 20.0]), 6.0);
        let quintic = lagrange(&nodes(&[-4.0, 0.0, 4.0, 8.0, 12.0, 16.0]), 6.0);
        assert_eq!(seed.guess, septic);
        assert!((seed.half_width - 2.0 * (septic - quintic).abs()).abs() < 1e-15);
        let error = (seed.guess - curve(6.0, n)).abs();
        assert!(error < seed.half_width, "{error:e} {seed:?}");
    }

    #[test]
    fn the_prediction_is_the_quintic_through_three_lines_on_either_side() {
        // Lagrange interpolation (Press et al., Numerical Recipes, 3rd ed., section 3.2):
        // line 6 of 64 from lines 60 (at -4), 0, 4 and 8, 12, 16; the estimate is twice the
        // difference from the cubic through 0, 4, 8 and 12.
        let n = 64;
        let mut slots: Vec<Option<LineBoundary>> = vec![None; n];
        for k in (0..n).step_by(4) {
            slots[k] = Some(line(k, n, curve(k as f64, n)));
        }
        let seed = predict(&slots, 6, n, false, 12, 1e-12).unwrap();
        let nodes = |ks: &[f64]| ks.iter().map(|&k| (k, curve(k, n))).collect::<Vec<_>>();
        let quintic = lagrange(&nodes(&[-4.0, 0.0, 4.0, 8.0, 12.0, 16.0]), 6.0);
        let cubic = lagrange(&nodes(&[0.0, 4.0, 8.0, 12.0]), 6.0);
        assert_eq!(seed.guess, quintic);
        assert!((seed.half_width - 2.0 * (quintic - cubic).abs()).abs() < 1e-15);
        let error = (seed.guess - curve(6.0, n)).abs();
        assert!(error < seed.half_width, "{error:e} {seed:?}");
        // With two finished lines on a side, the cubic and its distance from the linear
        // interpolation: line 6 when only 0, 4, 8 and 12 are finished (16 and 60 missing; the
        // lines beyond the reach of 12, such as 12 itself seen at -52, are not used).
        let mut four: Vec<Option<LineBoundary>> = vec![None; n];
        for k in [0usize, 4, 8, 12] {
            four[k] = slots[k].clone();
        }
        let seed = predict(&four, 6, n, false, 12, 1e-12).unwrap();
        let linear = lagrange(&nodes(&[4.0, 8.0]), 6.0);
        assert_eq!(seed.guess, cubic);
        assert!((seed.half_width - 2.0 * (cubic - linear).abs()).abs() < 1e-15);
        // The smallest half-width is kept.
        assert_eq!(
            predict(&slots, 6, n, false, 12, 0.5).unwrap().half_width,
            0.5
        );
    }

    #[test]
    fn lines_wrap_around_and_mirror() {
        // Without a mirror, line 62 of 64 is predicted from 52, 56, 60 and 0, 4, 8 (as 64,
        // 68, 72).
        let n = 64;
        let mut slots: Vec<Option<LineBoundary>> = vec![None; n];
        for k in (0..n).step_by(4) {
            slots[k] = Some(line(k, n, curve(k as f64, n)));
        }
        let seed = predict(&slots, 62, n, false, 12, 1e-12).unwrap();
        let error = (seed.guess - curve(62.0, n)).abs();
        assert!(error < seed.half_width, "{error:e} {seed:?}");
        // With a mirror only lines 0..=32 exist and the curve is even in ψ: line 2 is
        // predicted from 0, 4, 8 and the images of 4 and 8 (at -4 and -8).
        let even = |k: f64| 5.0 + 0.1 * (std::f64::consts::TAU * k / n as f64).cos();
        let mut half: Vec<Option<LineBoundary>> = vec![None; n / 2 + 1];
        for k in (0..=n / 2).step_by(4) {
            half[k] = Some(line(k, n, even(k as f64)));
        }
        let seed = predict(&half, 2, n, true, 12, 1e-12).unwrap();
        let nodes: Vec<(f64, f64)> = [-8.0, -4.0, 0.0, 4.0, 8.0, 12.0]
            .iter()
            .map(|&k| (k, even(k)))
            .collect();
        assert_eq!(seed.guess, lagrange(&nodes, 2.0));
        assert!((seed.guess - even(2.0)).abs() < seed.half_width);
    }

    #[test]
    fn no_prediction_across_a_line_with_several_crossings_or_too_few_neighbours() {
        let n = 64;
        let mut slots: Vec<Option<LineBoundary>> = vec![None; n];
        // Lines 4 and 8 only: one on either side of line 6 within the reach of 12 lines.
        slots[4] = Some(line(4, n, 5.0));
        slots[8] = Some(line(8, n, 5.1));
        assert_eq!(predict(&slots, 6, n, false, 12, 1e-12), None);
        slots[0] = Some(line(0, n, 4.9));
        slots[12] = Some(line(12, n, 5.2));
        assert!(predict(&slots, 6, n, false, 12, 1e-12).is_some());
        // A line with two crossings is not used: one line below again.
        let mut two = line(4, n, 5.0);
        two.crossings = vec![2.0, 5.0];
        slots[4] = Some(two);
        assert_eq!(predict(&slots, 6, n, false, 12, 1e-12), None);
    }

    #[test]
    fn every_line_is_traced_once_in_levels_and_seeded_only_after_the_anchors() {
        let n = 64;
        let calls = std::sync::Mutex::new(Vec::new());
        let finished = std::sync::Mutex::new(Vec::new());
        let lines = trace_in_levels(
            LAYOUT,
            |k, seed| {
                calls.lock().unwrap().push((k, seed.is_some()));
                line(k, n, curve(k as f64, n))
            },
            |l| {
                finished.lock().unwrap().push(l.psi);
                l.steps += 10;
            },
            None,
        )
        .lines;
        // Every line finished once.
        assert_eq!(finished.into_inner().unwrap().len(), n);
        assert!(lines.iter().all(|l| l.steps == 11));
        assert_eq!(lines.len(), n);
        for (k, l) in lines.iter().enumerate() {
            assert!((l.psi - std::f64::consts::TAU * k as f64 / n as f64).abs() < 1e-15);
        }
        let calls = calls.into_inner().unwrap();
        assert_eq!(calls.len(), n);
        for (k, seeded) in calls {
            assert_eq!(seeded, k % 4 != 0, "line {k}");
        }
        // A failed anchor turns seeding off.
        let levels = trace_in_levels(
            LAYOUT,
            |k, seed| {
                assert!(seed.is_none());
                let mut l = line(k, n, 5.0);
                if k == 8 {
                    l.failure = Some("failed".into());
                }
                l
            },
            |_| {},
            None,
        );
        assert!(levels.complete);
        assert_eq!(levels.lines.len(), n);
    }

    /// A line the caller refuses stops the levels after the one it belongs to: what is
    /// returned is the lines finished up to then, the same on one thread and on two.
    #[test]
    fn a_refused_line_stops_the_levels_after_its_own() {
        let n = 64;
        // (refused line, lines finished by then: its level and the ones before).
        for (bad, want) in [(8, n / 4), (6, n / 2), (5, n)] {
            let run = |threads: usize| {
                let pool = pool(threads);
                let located = std::sync::atomic::AtomicUsize::new(0);
                let levels = pool.install(|| {
                    trace_in_levels(
                        LAYOUT,
                        |k, _| {
                            located.fetch_add(1, Ordering::Relaxed);
                            line(k, n, curve(k as f64, n))
                        },
                        |l| l.steps += 10,
                        Some(&|l: &LineBoundary| {
                            (l.psi - std::f64::consts::TAU * bad as f64 / n as f64).abs() < 1e-12
                        }),
                    )
                });
                (levels, located.into_inner())
            };
            // The lines of the refused line's level and those before: every (n / want)-th.
            let expected: Vec<usize> = (0..n).step_by(n / want).collect();
            for threads in [1, 2] {
                let (levels, located) = run(threads);
                assert_eq!(levels.complete, want == n, "line {bad}, {threads} threads");
                let got: Vec<usize> = levels.lines.iter().map(|l| index(l, n)).collect();
                assert_eq!(got, expected, "line {bad}, {threads} threads");
                assert!(levels.lines.iter().all(|l| l.steps == 11));
                // On one thread the next level is never started once the refusal is known.
                if threads == 1 {
                    assert_eq!(located, want, "line {bad}");
                }
            }
        }
    }

    /// On one thread the queue runs level by level: a level's lines, then their checks, then
    /// the next level.
    #[test]
    fn on_one_thread_each_level_is_located_then_finished_before_the_next() {
        let n = 64;
        let events = std::sync::Mutex::new(Vec::new());
        let pool = pool(1);
        let levels = pool.install(|| {
            trace_in_levels(
                LAYOUT,
                |k, _| {
                    events.lock().unwrap().push((k, false));
                    line(k, n, curve(k as f64, n))
                },
                |l| {
                    let k = index(l, n);
                    events.lock().unwrap().push((k, true));
                },
                None,
            )
        });
        assert!(levels.complete);
        // The level of line k with anchors every 4th: 0 (k ≡ 0 mod 4), 1 (k ≡ 2), 2 (odd).
        let level = |k: usize| match k % 4 {
            0 => 0,
            2 => 1,
            _ => 2,
        };
        let ranks: Vec<usize> = events
            .into_inner()
            .unwrap()
            .iter()
            .map(|&(k, finished)| 2 * level(k) + usize::from(finished))
            .collect();
        assert_eq!(ranks.len(), 2 * n);
        assert!(ranks.windows(2).all(|w| w[0] <= w[1]), "{ranks:?}");
    }

    /// On two threads, while one thread is held on a line, the other finishes the lines of
    /// that level already located instead of waiting for the level to end. The held line
    /// waits (at most 60 s) until every other anchor is finished; the old level-by-level
    /// order never finished them before the level ended.
    #[test]
    fn a_thread_left_without_a_line_to_locate_finishes_lines() {
        let n = 64;
        let anchors = n / 4;
        let finished = std::sync::Mutex::new(0usize);
        let all_others = std::sync::Condvar::new();
        let pool = pool(2);
        let levels = pool.install(|| {
            trace_in_levels(
                LAYOUT,
                |k, _| {
                    if k == 0 {
                        let done = finished.lock().unwrap();
                        let (done, _) = all_others
                            .wait_timeout_while(done, std::time::Duration::from_secs(60), |d| {
                                *d < anchors - 1
                            })
                            .unwrap();
                        assert_eq!(*done, anchors - 1, "the other anchors were not finished");
                    }
                    line(k, n, curve(k as f64, n))
                },
                |l| {
                    // Anchors other than line 0 (no other line is located before line 0 is).
                    if l.psi > 0.0 {
                        *finished.lock().unwrap() += 1;
                        all_others.notify_all();
                    }
                },
                None,
            )
        });
        assert!(levels.complete);
        assert_eq!(levels.lines.len(), n);
    }

    /// A refusal found in a later level before one in an earlier level: the earlier one
    /// decides. Line 0's check is held until line 6 (of the second level) is checked and
    /// refused; then line 0 refuses too, and only the anchors are returned, all finished.
    #[test]
    fn an_earlier_level_refusing_last_still_decides() {
        let n = 64;
        let k_of = |l: &LineBoundary| index(l, n);
        let later_refused = std::sync::Mutex::new(false);
        let signal = std::sync::Condvar::new();
        let pool = pool(2);
        let levels = pool.install(|| {
            trace_in_levels(
                LAYOUT,
                |k, _| line(k, n, curve(k as f64, n)),
                |l| {
                    l.steps += 10;
                    match k_of(l) {
                        0 => {
                            let done = later_refused.lock().unwrap();
                            let (done, _) = signal
                                .wait_timeout_while(done, std::time::Duration::from_secs(60), |d| {
                                    !*d
                                })
                                .unwrap();
                            assert!(*done, "line 6 was not checked while line 0 was held");
                        }
                        6 => {
                            *later_refused.lock().unwrap() = true;
                            signal.notify_all();
                        }
                        _ => {}
                    }
                },
                Some(&|l: &LineBoundary| matches!(k_of(l), 0 | 6)),
            )
        });
        assert!(!levels.complete);
        let got: Vec<usize> = levels.lines.iter().map(k_of).collect();
        assert_eq!(got, (0..n).step_by(4).collect::<Vec<_>>());
        assert!(levels.lines.iter().all(|l| l.steps == 11));
    }

    /// The anchor spacing, and every line traced once for counts of angles that are not
    /// powers of two, with and without the mirror, the anchors at most `max_anchors`.
    #[test]
    fn spread_anchors_are_at_most_max_anchors_and_every_line_is_traced_once() {
        assert_eq!(anchor_stride(64, 4, 16), 4);
        assert_eq!(anchor_stride(256, 4, 16), 16);
        assert_eq!(anchor_stride(100, 4, 16), 7);
        assert_eq!(anchor_stride(1000, 4, 16), 63);
        assert_eq!(anchor_stride(1000, 1, 16), 1);
        for n in [100, 1000] {
            for mirror in [false, true] {
                let every = anchor_stride(n, 4, 16);
                let traced = if mirror { n / 2 + 1 } else { n };
                let layout = Layout {
                    n,
                    traced,
                    mirror,
                    every,
                    min_half_width: 1e-9,
                };
                let calls = std::sync::Mutex::new(vec![0usize; traced]);
                let anchors = std::sync::atomic::AtomicUsize::new(0);
                let levels = trace_in_levels(
                    layout,
                    |k, seed| {
                        calls.lock().unwrap()[k] += 1;
                        if k % every == 0 {
                            assert!(seed.is_none(), "anchor {k} of {n}");
                            anchors.fetch_add(1, Ordering::Relaxed);
                        }
                        line(k, n, curve(k as f64, n))
                    },
                    |_| {},
                    None,
                );
                assert!(levels.complete);
                assert_eq!(levels.lines.len(), traced);
                assert!(calls.into_inner().unwrap().iter().all(|&c| c == 1), "{n}");
                let anchors = anchors.into_inner();
                assert!(anchors <= 16, "{n} {mirror}: {anchors} anchors");
            }
        }
    }
}
