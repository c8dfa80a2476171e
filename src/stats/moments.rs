//! Mean and sum of squared deviations, computed per chunk and combined in a fixed order.
//!
//! Within a chunk: the mean, then M2 = sum (y - mean)^2 over the chunk (two passes, the chunk is in
//! cache; see [`joint_moments`]). Chunks combine by the pairwise update of Chan,
//! Golub and LeVeque (Am. Stat. 37, 242, 1983): with d = mean_b - mean_a and n = n_a + n_b,
//! mean = mean_a + d n_b / n, M2 = M2_a + M2_b + d^2 n_a n_b / n.

/// Count, mean and sum of squared deviations from the mean.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Moments {
    /// Number of values.
    pub(crate) count: u64,
    /// Their mean.
    pub mean: f64,
    /// Sum of squared deviations from the mean.
    pub(crate) m2: f64,
}

impl Moments {
    /// No values.
    pub(crate) const EMPTY: Moments = Moments {
        count: 0,
        mean: 0.0,
        m2: 0.0,
    };

    /// Moments of a slice (see [`joint_moments`], of which this is the one-column case).
    pub fn of(values: &[f64]) -> Moments {
        joint_moments(&[values]).0[0]
    }

    /// Combine with the moments of the values that follow.
    pub(crate) fn merge(&self, other: &Moments) -> Moments {
        if other.count == 0 {
            return *self;
        }
        if self.count == 0 {
            return *other;
        }
        let (na, nb) = (self.count as f64, other.count as f64);
        let n = na + nb;
        let d = other.mean - self.mean;
        Moments {
            count: self.count + other.count,
            mean: self.mean + d * (nb / n),
            m2: self.m2 + other.m2 + d * d * (na * nb / n),
        }
    }

    /// Sample variance with M - 1 in the denominator (JCGM 101 7.6).
    pub fn variance(&self) -> f64 {
        if self.count < 2 {
            0.0
        } else {
            self.m2 / (self.count - 1) as f64
        }
    }
}

/// Joint moments of two columns: means, sums of squared deviations and the sum of products of
/// deviations, combined in a fixed order like [`Moments`] (the bivariate form of the pairwise
/// update: C = C_a + C_b + dx dy n_a n_b / n).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CoMoments {
    /// Number of pairs.
    pub(crate) count: u64,
    /// Mean of x.
    pub(crate) mean_x: f64,
    /// Mean of y.
    pub(crate) mean_y: f64,
    /// Sum of squared deviations of x.
    pub(crate) m2x: f64,
    /// Sum of squared deviations of y.
    pub(crate) m2y: f64,
    /// Sum of products of deviations.
    pub(crate) cxy: f64,
}

impl CoMoments {
    /// No pairs.
    pub(crate) const EMPTY: CoMoments = CoMoments {
        count: 0,
        mean_x: 0.0,
        mean_y: 0.0,
        m2x: 0.0,
        m2y: 0.0,
        cxy: 0.0,
    };

    /// Joint moments of two equally long slices (see [`joint_moments`]).
    pub(crate) fn of(x: &[f64], y: &[f64]) -> CoMoments {
        let n = x.len().min(y.len());
        joint_moments(&[&x[..n], &y[..n]]).1[0]
    }

    /// Combine with the joint moments of the pairs that follow.
    pub(crate) fn merge(&self, o: &CoMoments) -> CoMoments {
        if o.count == 0 {
            return *self;
        }
        if self.count == 0 {
            return *o;
        }
        let (na, nb) = (self.count as f64, o.count as f64);
        let n = na + nb;
        let (dx, dy) = (o.mean_x - self.mean_x, o.mean_y - self.mean_y);
        let w = na * nb / n;
        CoMoments {
            count: self.count + o.count,
            mean_x: self.mean_x + dx * nb / n,
            mean_y: self.mean_y + dy * nb / n,
            m2x: self.m2x + o.m2x + dx * dx * w,
            m2y: self.m2y + o.m2y + dy * dy * w,
            cxy: self.cxy + o.cxy + dx * dy * w,
        }
    }

    /// Pearson correlation coefficient; `None` when either column is constant.
    pub(crate) fn correlation(&self) -> Option<f64> {
        let d = (self.m2x * self.m2y).sqrt();
        (d > 0.0).then(|| (self.cxy / d).clamp(-1.0, 1.0))
    }
}

/// Lanes of the independent partial sums below (a fixed number, so the result does not depend on
/// the machine).
const LANES: usize = 8;

/// sum f(x_i, y_i) over `LANES` interleaved partial sums, added up in a fixed order at the end
/// (vectorisable; the same result on every machine).
#[inline(always)]
fn lane_sum(x: &[f64], y: &[f64], f: impl Fn(f64, f64) -> f64) -> f64 {
    let mut acc = [0.0f64; LANES];
    let xs = x.chunks_exact(LANES);
    let ys = y.chunks_exact(LANES);
    let (xr, yr) = (xs.remainder(), ys.remainder());
    for (cx, cy) in xs.zip(ys) {
        for l in 0..LANES {
            acc[l] += f(cx[l], cy[l]);
        }
    }
    let mut tail = 0.0;
    for (a, b) in xr.iter().zip(yr) {
        tail += f(*a, *b);
    }
    ((acc[0] + acc[1]) + (acc[2] + acc[3])) + ((acc[4] + acc[5]) + (acc[6] + acc[7])) + tail
}

/// Moments of every column and joint moments of every pair (a < b, in the order (0,1), (0,2),
/// ..., (1,2), ...) of equally long columns, in two passes: the mean as the first value plus the
/// mean of the differences from it (which keeps the sum small beside the values), then the
/// squared deviations, their sum (to correct the mean's rounding: m2 -= (sum d)^2 / n) and the
/// products of deviations. Partial sums run in fixed lanes, so the results are the same on every
/// machine and thread count.
pub fn joint_moments(cols: &[&[f64]]) -> (Vec<Moments>, Vec<CoMoments>) {
    let k = cols.len();
    let n = cols.first().map_or(0, |c| c.len());
    if n == 0 {
        return (
            vec![Moments::EMPTY; k],
            vec![CoMoments::EMPTY; k * k.saturating_sub(1) / 2],
        );
    }
    let nf = n as f64;
    let means: Vec<f64> = cols
        .iter()
        .map(|c| {
            let shift = c[0];
            shift + lane_sum(c, c, |v, _| v - shift) / nf
        })
        .collect();
    let mut moments = Vec::with_capacity(k);
    let mut comp = Vec::with_capacity(k);
    for (c, &m) in cols.iter().zip(&means) {
        let sum_d = lane_sum(c, c, |v, _| v - m);
        let m2 = lane_sum(c, c, |v, _| (v - m) * (v - m));
        comp.push(sum_d);
        moments.push(Moments {
            count: n as u64,
            mean: m,
            // An overflowed sum of squares stays infinite (never clamped to 0): the engine
            // refuses a variance it cannot represent.
            m2: if m2.is_finite() {
                (m2 - sum_d * sum_d / nf).max(0.0)
            } else {
                f64::INFINITY
            },
        });
    }
    let mut co = Vec::with_capacity(k * k.saturating_sub(1) / 2);
    for a in 0..k {
        for b in a + 1..k {
            let (x, y, mx, my) = (cols[a], cols[b], means[a], means[b]);
            let cxy = lane_sum(x, y, |u, v| (u - mx) * (v - my));
            co.push(CoMoments {
                count: n as u64,
                mean_x: mx,
                mean_y: my,
                m2x: moments[a].m2,
                m2y: moments[b].m2,
                cxy: cxy - comp[a] * comp[b] / nf,
            });
        }
    }
    (moments, co)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn merged_chunks_equal_the_whole() {
        let values: Vec<f64> = (0..10_001)
            .map(|i| 1e6 + ((i * 7919) % 1000) as f64 * 1e-3)
            .collect();
        let whole = Moments::of(&values);
        let merged = values
            .chunks(997)
            .map(Moments::of)
            .fold(Moments::EMPTY, |a, b| a.merge(&b));
        assert_relative_eq!(whole.mean, merged.mean, max_relative = 1e-15);
        assert_relative_eq!(whole.variance(), merged.variance(), max_relative = 1e-10);
        // Direct two-pass reference.
        let mean = values.iter().sum::<f64>() / values.len() as f64;
        let var =
            values.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (values.len() - 1) as f64;
        assert_relative_eq!(whole.variance(), var, max_relative = 1e-9);
    }

    #[test]
    fn joint_moments_agree_with_the_separate_ones() {
        let x: Vec<f64> = (0..3000)
            .map(|i| 1e3 + ((i * 37) % 101) as f64 * 0.1)
            .collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, v)| -0.5 * v + ((i * 13) % 7) as f64)
            .collect();
        let z: Vec<f64> = (0..3000).map(|i| ((i * 7919) % 1000) as f64).collect();
        let (m, c) = joint_moments(&[&x, &y, &z]);
        assert_eq!(m[0], Moments::of(&x));
        assert_eq!(m[1], Moments::of(&y));
        assert_eq!(m[2], Moments::of(&z));
        let direct = CoMoments::of(&x, &y);
        assert_relative_eq!(
            c[0].correlation().unwrap(),
            direct.correlation().unwrap(),
            max_relative = 1e-12
        );
        assert_relative_eq!(
            c[2].correlation().unwrap(),
            CoMoments::of(&y, &z).correlation().unwrap(),
            max_relative = 1e-12
        );
    }

    #[test]
    fn merged_co_moments_equal_the_whole() {
        let x: Vec<f64> = (0..5000).map(|i| ((i * 37) % 101) as f64).collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, v)| 0.5 * v + ((i * 13) % 7) as f64)
            .collect();
        let whole = CoMoments::of(&x, &y);
        let merged = x
            .chunks(333)
            .zip(y.chunks(333))
            .map(|(a, b)| CoMoments::of(a, b))
            .fold(CoMoments::EMPTY, |a, b| a.merge(&b));
        assert_relative_eq!(
            whole.correlation().unwrap(),
            merged.correlation().unwrap(),
            max_relative = 1e-12
        );
        // Direct Pearson reference.
        let n = x.len() as f64;
        let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
        let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).sum();
        let sxx: f64 = x.iter().map(|a| (a - mx).powi(2)).sum();
        let syy: f64 = y.iter().map(|b| (b - my).powi(2)).sum();
        assert_relative_eq!(
            whole.correlation().unwrap(),
            sxy / (sxx * syy).sqrt(),
            max_relative = 1e-12
        );
    }
}
