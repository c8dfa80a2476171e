//! The near-limit reference of the whole-process benchmark: the `torsion-power` demo
//! (data/torsion-vacuum-20w.toml) written as a bare Rust loop, with no scenario file, no
//! formula machinery and no reports: parallel chunks of 16 384 trials, each with its own
//! Xoshiro256++ stream, the same samplers (rand_distr) and the same physics inline; then, for
//! each of the three measurands, the mean, u and both 95 % coverage intervals of JCGM 101 7.7
//! from the two tails (select, then sort only the outer 5 %).
//!
//! Build: cargo build --release --example bare_loop
//! Run:   target/release/examples/bare_loop TRIALS [THREADS]

use rand::{Rng, SeedableRng};
use rand_distr::{Distribution, StandardNormal, StudentT};
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;
use std::f64::consts::PI;

const C: f64 = 299_792_458.0;
const CHUNK: usize = 16_384;

fn uniform(rng: &mut Xoshiro256PlusPlus) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

fn normal(rng: &mut Xoshiro256PlusPlus, mean: f64, sd: f64) -> f64 {
    let z: f64 = StandardNormal.sample(rng);
    mean + sd * z
}

fn rect(rng: &mut Xoshiro256PlusPlus, a: f64, b: f64) -> f64 {
    a + (b - a) * uniform(rng)
}

fn intervals(y: &mut [f64], p: f64) -> ((f64, f64), (f64, f64)) {
    let m = y.len();
    let q = (p * m as f64 + 0.5).floor() as usize;
    let k = m - q;
    y.select_nth_unstable_by(k, f64::total_cmp);
    y[..k].sort_unstable_by(f64::total_cmp);
    y[k..].select_nth_unstable_by(q - k, f64::total_cmp);
    y[q..].sort_unstable_by(f64::total_cmp);
    // JCGM 101 7.7.2: r = (M - q)/2 when that is an integer, else (M - q + 1)/2.
    let r = k.div_ceil(2);
    let sym = (y[r - 1], y[r - 1 + q]);
    let mut best = 0;
    for j in 0..k {
        if y[j + q] - y[j] < y[best + q] - y[best] {
            best = j;
        }
    }
    (sym, (y[best], y[best + q]))
}

fn main() {
    let mut args = std::env::args().skip(1);
    let trials: usize = args
        .next()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1_000_000);
    let threads: usize = args.next().and_then(|s| s.parse().ok()).unwrap_or(0);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("thread pool");
    pool.install(|| {
        // readout_shift: ten readings, mean and s / sqrt(10), 9 degrees of freedom.
        let readings = [7.975e-3, 7.992e-3, 7.981e-3, 8.001e-3, 7.988e-3, 7.979e-3, 7.996e-3, 7.984e-3, 7.990e-3, 7.994e-3];
        let n = readings.len() as f64;
        let mean_s = readings.iter().sum::<f64>() / n;
        let sd_s = (readings.iter().map(|x| (x - mean_s).powi(2)).sum::<f64>() / (n - 1.0)).sqrt() / n.sqrt();
        let t9 = StudentT::new(n - 1.0).expect("dof");
        let deg = PI / 180.0;
        let start = std::time::Instant::now();
        let mut power = vec![0.0; trials];
        let mut force = vec![0.0; trials];
        let mut kappa = vec![0.0; trials];
        power
            .par_chunks_mut(CHUNK)
            .zip(force.par_chunks_mut(CHUNK))
            .zip(kappa.par_chunks_mut(CHUNK))
            .enumerate()
            .for_each(|(c, ((p, f), k))| {
                let mut rng = Xoshiro256PlusPlus::seed_from_u64(0x5eed ^ (c as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15));
                for i in 0..p.len() {
                    let s = mean_s + sd_s * t9.sample(&mut rng);
                    let d = normal(&mut rng, 2.0, 0.5e-3);
                    let t0 = normal(&mut rng, 60.0, 0.02);
                    let inertia = normal(&mut rng, 3.0e-4, 0.009e-4);
                    let lever = rect(&mut rng, 49.9e-3, 50.1e-3);
                    let r = rect(&mut rng, 0.9990, 0.9995);
                    let theta = normal(&mut rng, 10.0 * deg, 0.2 * deg);
                    let w = normal(&mut rng, 1.5e-3, 0.1e-3);
                    let a = 6e-3;
                    let t = rect(&mut rng, 0.0, 1e-4);
                    let rd = rect(&mut rng, 0.0, 2e-4);
                    let q = 3000.0;
                    let stray = normal(&mut rng, 0.0, 0.5e-9);
                    let omega = 2.0 * PI / t0;
                    let kap = inertia * omega * omega / (1.0 - 0.25 / (q * q));
                    let phi = (s / d).atan() * 0.5;
                    let force_i = kap * phi / lever - stray;
                    let eta = 1.0 - (-2.0 * a * a / (w * w)).exp();
                    let g = (1.0 + r - t) * theta.cos() + 2.0 / 3.0 * rd;
                    p[i] = force_i * C / (g * eta);
                    f[i] = force_i;
                    k[i] = kap;
                }
            });
        if std::env::var_os("BARE_LOOP_TIMING").is_some() {
            eprintln!("trials computed in {:?}", start.elapsed());
        }
        for (name, col) in [("power", &mut power), ("force", &mut force), ("torsion_constant", &mut kappa)] {
            let m = col.len() as f64;
            let mean = col.par_iter().sum::<f64>() / m;
            let u = (col.par_iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (m - 1.0)).sqrt();
            let (sym, short) = intervals(col, 0.95);
            println!("{name}: mean {mean:.6e} u {u:.3e} symmetric [{:.6e}, {:.6e}] shortest [{:.6e}, {:.6e}]", sym.0, sym.1, short.0, short.1);
        }
    });
}
