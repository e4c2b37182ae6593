//! A posterior ([`crate::posterior::infer_on`]) on the run executor: every batch of model
//! evaluations the sampler asks for (a half-step of the ensembles, a step of nested sampling's
//! walks, a quadrature grid) is a batch of work items, so observers see the evaluations and
//! the stage (`step 12 of 1000`), and a stop request ends the run once the evaluations in
//! progress finish. A stopped sampler has no posterior: nothing partial is reported as a result.

use super::{Controls, Executor, RunError, Selection, WorkList};
use crate::posterior::{
    infer_on, Evaluation, Evaluator, InferRunError, InferSettings, Inference, PosteriorModel,
};
use crate::sampling::{EnsembleError, Halted, NestedError, QuadratureError};

/// Why a posterior run on the executor gave no posterior.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum InferStop {
    /// The sampler could not run or be summarised.
    #[error(transparent)]
    Run(InferRunError),
    /// Stopped on request after `done` model evaluations.
    #[error("interrupted after {done} model evaluations")]
    Interrupted {
        /// Evaluations finished before the stop.
        done: usize,
    },
}

/// [`infer_on`] with its evaluations on a run executor carrying `controls`' observers and
/// stop flag.
pub fn infer_with(
    model: &PosteriorModel,
    settings: &InferSettings,
    controls: Controls<'_>,
) -> Result<Inference, InferStop> {
    let mut on = OnExecutor {
        exec: Executor::new("posterior", "model evaluations").with(controls),
        stopped: None,
    };
    let result = infer_on(model, settings, &mut on);
    let halted = matches!(
        result,
        Err(InferRunError::Ensemble(EnsembleError::Halted(_)))
            | Err(InferRunError::Nested(NestedError::Halted(_)))
            | Err(InferRunError::Quadrature(QuadratureError::Halted(_)))
    );
    if halted {
        return Err(InferStop::Interrupted {
            done: on.exec.status().done,
        });
    }
    let inference = result.map_err(InferStop::Run)?;
    // Completing the run tells the observers it ended; no checkpoint can fail here.
    on.exec.finish().map_err(|_| InferStop::Interrupted {
        done: on.exec.status().done,
    })?;
    Ok(inference)
}

/// The executor as the sampler's evaluator.
struct OnExecutor<'e> {
    exec: Executor<'e, Evaluation>,
    stopped: Option<RunError>,
}

impl Evaluator for OnExecutor<'_> {
    fn evaluate(
        &mut self,
        stage: &str,
        model: &PosteriorModel,
        points: &[Vec<f64>],
    ) -> Result<Vec<Evaluation>, Halted> {
        self.exec.stage(stage);
        match self.exec.batch(&Points { model, points }, &Selection::All) {
            Ok(batch) => Ok(batch.outputs),
            Err(e) => {
                self.stopped.get_or_insert(e);
                Err(Halted)
            }
        }
    }
}

/// Points of the parameter space as work items; the key is the point's coordinates in
/// hexadecimal bits (the same point on any machine).
struct Points<'a> {
    model: &'a PosteriorModel,
    points: &'a [Vec<f64>],
}

impl WorkList for Points<'_> {
    type Output = Evaluation;

    fn len(&self) -> usize {
        self.points.len()
    }

    fn key(&self, index: usize) -> String {
        let bits: Vec<String> = self.points[index]
            .iter()
            .map(|x| format!("{:016x}", x.to_bits()))
            .collect();
        bits.join(",")
    }

    fn run(&self, index: usize) -> Evaluation {
        self.model.evaluate(&self.points[index])
    }
}
