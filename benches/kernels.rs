//! Kernel benchmarks (divan): the pieces of a run, per block of trials or per column.
//! Run with `cargo bench --bench kernels`.

use divan::{Bencher, black_box};
use radforce::dist::{Distribution, Normal, Rectangular, ScaledT};
use radforce::engine::sampling::{fill_inputs, fill_steps};
use radforce::engine::{BLOCK_TRIALS, Plan, simulate, stream::chunk_stream};
use radforce::scenario::{Study, load_file};
use radforce::stats::intervals::coverage_intervals;
use radforce::stats::moments::{Moments, joint_moments};
use std::path::Path;

fn main() {
    divan::main();
}

fn demo() -> Study {
    load_file(&Path::new(env!("CARGO_MANIFEST_DIR")).join("data/torsion-vacuum-20w.toml")).unwrap()
}

/// Drawing one block of 256 values from a family.
#[divan::bench(args = ["normal", "rectangular", "t(9)"])]
fn sample_block(bencher: Bencher, family: &str) {
    let d = match family {
        "normal" => Distribution::Normal(Normal::new(1.0, 0.1).unwrap()),
        "rectangular" => Distribution::Rectangular(Rectangular::new(0.0, 1.0).unwrap()),
        _ => Distribution::T(ScaledT::new(0.0, 1.0, 9.0).unwrap()),
    };
    let mut rng = chunk_stream(1, 0);
    let mut out = vec![0.0; BLOCK_TRIALS];
    bencher.counter(BLOCK_TRIALS).bench_local(|| {
        d.fill(&mut rng, &mut out);
        black_box(&out);
    });
}

/// Drawing every input of the torsion demo for one block.
#[divan::bench]
fn torsion_inputs_block(bencher: Bencher) {
    let study = demo();
    let steps = fill_steps(&study);
    let mut rng = chunk_stream(1, 0);
    let mut work = vec![0.0; study.model.columns() * BLOCK_TRIALS];
    bencher.counter(BLOCK_TRIALS).bench_local(|| {
        fill_inputs(
            &study,
            &steps,
            &mut rng,
            &mut work,
            BLOCK_TRIALS,
            BLOCK_TRIALS,
        );
        black_box(&work);
    });
}

/// Evaluating the torsion-power chain on one block.
#[divan::bench]
fn torsion_chain_block(bencher: Bencher) {
    let study = demo();
    let steps = fill_steps(&study);
    let mut rng = chunk_stream(1, 0);
    let mut work = vec![0.0; study.model.columns() * BLOCK_TRIALS];
    fill_inputs(
        &study,
        &steps,
        &mut rng,
        &mut work,
        BLOCK_TRIALS,
        BLOCK_TRIALS,
    );
    let mut stack = vec![0.0; study.model.stack_depth() * BLOCK_TRIALS];
    bencher.counter(BLOCK_TRIALS).bench_local(|| {
        study
            .model
            .evaluate_block(&mut work, BLOCK_TRIALS, BLOCK_TRIALS, &mut stack);
        black_box(&work);
    });
}

/// A whole in-memory run of the demo, 10^5 trials (all cores).
#[divan::bench(sample_count = 10)]
fn torsion_simulate_1e5(bencher: Bencher) {
    let study = demo();
    bencher
        .counter(100_000usize)
        .bench(|| black_box(simulate(&study, Plan::new(100_000, 1)).unwrap()));
}

/// Both coverage intervals of 10^6 values.
#[divan::bench(sample_count = 20)]
fn intervals_1e6(bencher: Bencher) {
    let study = demo();
    let s = simulate(&study, Plan::new(1_000_000, 1)).unwrap();
    bencher
        .counter(1_000_000usize)
        .bench(|| black_box(coverage_intervals(&s.measurands[0], 0.95)));
}

/// Moments of one chunk, separately and jointly for three columns.
#[divan::bench]
fn chunk_moments(bencher: Bencher) {
    let x: Vec<f64> = (0..16_384).map(|i| (i as f64).sin()).collect();
    let y: Vec<f64> = x.iter().map(|v| v * 2.0 + 1.0).collect();
    let z: Vec<f64> = x.iter().map(|v| v * v).collect();
    bencher
        .counter(16_384usize)
        .bench_local(|| black_box(joint_moments(&[&x, &y, &z])));
    black_box(Moments::of(&x));
}
