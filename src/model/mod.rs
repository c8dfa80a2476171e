//! Measurement models: a built-in chain, user formulas, or both, compiled once into a [`Model`]
//! that evaluates a block of trials with no string lookups and no allocation.
//!
//! Trials live in a column block: column `c` holds `stride` trials at `c * stride`. The first
//! `inputs` columns are the input quantities (filled by the engine), the next ones the
//! measurands in report order (filled here). Evaluation is generic over [`Scalar`] so the same
//! model runs on `f64` trials and on derivative-carrying numbers for the law of propagation.

pub mod chain;
pub mod formula;
pub(crate) mod optics;

pub(crate) use chain::{
    Chain, ChainContext, ChainInput, ChainIssue, ChainSpec, Domain, InputValues, Subsystem,
};

use crate::physics::noise::NoiseSettings;
use crate::scalar::Scalar;
use formula::Program;

/// The one list of built-in chains: each file (a module under `model/`) with the chains it
/// defines, each chain a line `Variant = Type`, in the order users see them. It declares the
/// modules and makes [`ChainKind`], whose methods dispatch to each chain's [`Chain`]
/// implementation.
macro_rules! chains {
    ($($module:ident { $($(#[$doc:meta])* $variant:ident = $ty:ident,)* })*) => {
        $(mod $module;)*

        /// The built-in chains.
        #[derive(Clone, Copy, Debug, PartialEq, Eq)]
        pub(crate) enum ChainKind {
            $($($(#[$doc])* $variant,)*)*
        }

        impl ChainKind {
            /// Every chain, in the order shown to users.
            pub(crate) const ALL: &'static [ChainKind] = &[$($(ChainKind::$variant,)*)*];

            /// Its name, inputs and measurands.
            pub(crate) fn spec(self) -> &'static ChainSpec {
                match self {
                    $($(ChainKind::$variant => &<$module::$ty as Chain>::SPEC,)*)*
                }
            }

            /// The chain's own white force-noise terms from `[noise]` (see
            /// [`Chain::instrument_noise`]).
            pub(crate) fn instrument_noise(
                self,
                settings: &NoiseSettings,
                inputs: &InputValues<'_>,
            ) -> Result<Vec<(&'static str, f64)>, ChainIssue> {
                match self {
                    $($(ChainKind::$variant => <$module::$ty as Chain>::instrument_noise(settings, inputs),)*)*
                }
            }

            /// The observed input and signal twin of a calibration chain (see
            /// [`Chain::FORECAST`]).
            pub fn forecast(self) -> Option<chain::Forecastable> {
                match self {
                    $($(ChainKind::$variant => <$module::$ty as Chain>::FORECAST,)*)*
                }
            }

            /// Evaluate the chain once: `args` in the order of its inputs; its measurands in
            /// order.
            pub fn evaluate_point(self, context: &ChainContext, args: &[f64]) -> Vec<f64> {
                let mut out = vec![0.0; self.spec().measurands.len()];
                match self {
                    $($(ChainKind::$variant => <$module::$ty as Chain>::evaluate(context, args, &mut out),)*)*
                }
                out
            }

            /// How the instrument follows a force at the estimates (see [`Chain::instrument`]).
            pub fn instrument(
                self,
                inputs: &InputValues<'_>,
            ) -> crate::physics::response::Instrument<f64> {
                match self {
                    $($(ChainKind::$variant => <$module::$ty as Chain>::instrument(inputs),)*)*
                }
            }

            /// The chain's checks across inputs at load (see [`Chain::cross_checks`]).
            pub(crate) fn cross_checks(self, inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
                match self {
                    $($(ChainKind::$variant => <$module::$ty as Chain>::cross_checks(inputs),)*)*
                }
            }
        }

        /// Evaluate a bound chain over `n` trials of a block: one match per block, the chain
        /// function then inlined into its trial loop.
        #[inline]
        fn evaluate_chain<T: Scalar>(chain: &BoundChain, work: &mut [T], stride: usize, n: usize) {
            match chain.kind {
                $($(ChainKind::$variant => chain_loop(chain, work, stride, n, |a: &[T], o: &mut [T]| <$module::$ty as Chain>::evaluate::<T>(&chain.context, a, o)),)*)*
            }
        }
    };
}

chains! {
    torsion {
        /// Calibration direction of a torsion balance: power from the optical-lever reading.
        TorsionPower = TorsionPower,
        /// Planning direction of a torsion balance: the signals a given power produces.
        TorsionSignal = TorsionSignal,
    }
    weighing {
        /// Calibration direction of a force balance: power from the reading.
        WeighingPower = WeighingPower,
        /// Planning direction of a force balance: the reading a given power produces.
        WeighingSignal = WeighingSignal,
    }
}

impl ChainKind {
    /// Look a chain up by its scenario name.
    pub(crate) fn from_name(name: &str) -> Option<ChainKind> {
        Self::ALL.iter().copied().find(|c| c.spec().name == name)
    }
}

/// Where a chain argument comes from.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum ArgSource {
    /// A column of the trial block (an input quantity).
    Column(usize),
    /// A fixed value (a chain default for an input the scenario left out).
    Fixed(f64),
}

/// The most arguments a chain takes.
pub(crate) const MAX_CHAIN_ARGS: usize = 32;
/// The most measurands a chain gives.
pub(crate) const MAX_CHAIN_OUTPUTS: usize = 8;

/// A chain with its arguments bound to columns.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct BoundChain {
    /// Which chain.
    pub(crate) kind: ChainKind,
    /// One source per chain input, in spec order.
    pub(crate) args: Vec<ArgSource>,
    /// Column of the chain's first measurand; the rest follow in spec order.
    pub(crate) first_output: usize,
    /// What its evaluation needs besides the inputs (the procedure).
    pub(crate) context: ChainContext,
}

/// A formula measurand.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct FormulaStep {
    /// Column the result goes to.
    pub(crate) column: usize,
    /// The compiled formula.
    pub(crate) program: Program,
}

/// A compiled measurement model.
#[derive(Clone, Debug, PartialEq)]
pub struct Model {
    /// Number of input columns.
    pub(crate) inputs: usize,
    /// Number of measurand columns.
    pub(crate) measurands: usize,
    /// The chain, if any; evaluated first.
    pub(crate) chain: Option<BoundChain>,
    /// Formula measurands in an order where each comes after everything it uses.
    pub(crate) steps: Vec<FormulaStep>,
}

impl Model {
    /// Total columns: inputs then measurands.
    pub fn columns(&self) -> usize {
        self.inputs + self.measurands
    }

    /// Stack space (in blocks) the formulas need.
    pub fn stack_depth(&self) -> usize {
        self.steps
            .iter()
            .map(|s| s.program.depth())
            .max()
            .unwrap_or(0)
    }

    /// Evaluate `n <= stride` trials of the block `work` (`columns() * stride` values) in place:
    /// reads the input columns, writes the measurand columns. `stack` needs
    /// `stack_depth() * stride` values.
    #[inline]
    pub fn evaluate_block<T: Scalar>(
        &self,
        work: &mut [T],
        stride: usize,
        n: usize,
        stack: &mut [T],
    ) {
        if let Some(chain) = &self.chain {
            evaluate_chain(chain, work, stride, n);
        }
        for step in &self.steps {
            step.program.eval_block(work, stride, n, stack);
            work[step.column * stride..step.column * stride + n].copy_from_slice(&stack[..n]);
        }
    }

    /// Evaluate one trial from input values; returns all measurands in report order.
    pub fn evaluate_point<T: Scalar>(&self, inputs: &[T]) -> Vec<T> {
        let mut work = vec![T::cst(0.0); self.columns()];
        work[..self.inputs].copy_from_slice(inputs);
        let mut stack = vec![T::cst(0.0); self.stack_depth().max(1)];
        self.evaluate_block(&mut work, 1, 1, &mut stack);
        work[self.inputs..].to_vec()
    }
}

#[inline(always)]
fn chain_loop<T: Scalar, F: Fn(&[T], &mut [T])>(
    chain: &BoundChain,
    work: &mut [T],
    stride: usize,
    n: usize,
    f: F,
) {
    let outputs = chain.kind.spec().measurands.len();
    let mut args = [T::cst(0.0); MAX_CHAIN_ARGS];
    let out = [T::cst(0.0); MAX_CHAIN_OUTPUTS];
    let na = chain.args.len();
    // (slot, column) of the arguments that vary; the fixed ones are set once.
    let mut varying = [(0usize, 0usize); MAX_CHAIN_ARGS];
    let mut nv = 0;
    for (slot, src) in chain.args.iter().enumerate() {
        match src {
            ArgSource::Fixed(v) => args[slot] = T::cst(*v),
            ArgSource::Column(c) => {
                varying[nv] = (slot, *c);
                nv += 1;
            }
        }
    }
    // Groups of SUB trials: each varying argument is copied from its column into the group's
    // argument rows in one short loop (instead of an index computation per argument per
    // trial), and the results go back to their columns the same way. The fixed arguments stay
    // in the rows from the start. One call site, so the chain function is inlined.
    const SUB: usize = 8;
    let mut rows = [args; SUB];
    let mut outs = [out; SUB];
    for i0 in (0..n).step_by(SUB) {
        let len = SUB.min(n - i0);
        for &(slot, c) in &varying[..nv] {
            let col = &work[c * stride + i0..c * stride + i0 + len];
            for (row, x) in rows.iter_mut().zip(col) {
                row[slot] = *x;
            }
        }
        for (row, o) in rows.iter().zip(outs.iter_mut()).take(len) {
            f(&row[..na], &mut o[..outputs]);
        }
        for m in 0..outputs {
            let start = (chain.first_output + m) * stride + i0;
            for (dst, o) in work[start..start + len].iter_mut().zip(&outs) {
                *dst = o[m];
            }
        }
    }
}
