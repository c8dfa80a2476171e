//! Mean and sum of squared deviations, computed per chunk and combined in a fixed order.
//!
//! Within a chunk: the mean by compensated (Neumaier) summation, then M2 = sum (y - mean)^2 over
//! the chunk (two passes, the chunk is in cache). Chunks combine by the pairwise update of Chan,
//! Golub and LeVeque (Am. Stat. 37, 242, 1983): with d = mean_b - mean_a and n = n_a + n_b,
//! mean = mean_a + d n_b / n, M2 = M2_a + M2_b + d^2 n_a n_b / n.

/// Count, mean and sum of squared deviations from the mean.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Moments {
    /// Number of values.
    pub count: u64,
    /// Their mean.
    pub mean: f64,
    /// Sum of squared deviations from the mean.
    pub m2: f64,
}

/// Neumaier's compensated sum (Neumaier, ZAMM 54, 39, 1974).
pub fn compensated_sum(values: &[f64]) -> f64 {
    let mut sum = 0.0f64;
    let mut c = 0.0f64;
    for &x in values {
        let t = sum + x;
        if sum.abs() >= x.abs() {
            c += (sum - t) + x;
        } else {
            c += (x - t) + sum;
        }
        sum = t;
    }
    sum + c
}

impl Moments {
    /// No values.
    pub const EMPTY: Moments = Moments {
        count: 0,
        mean: 0.0,
        m2: 0.0,
    };

    /// Moments of a slice.
    pub fn of(values: &[f64]) -> Moments {
        if values.is_empty() {
            return Moments::EMPTY;
        }
        let n = values.len() as f64;
        let mean = compensated_sum(values) / n;
        let mut m2 = 0.0;
        let mut comp = 0.0;
        for &x in values {
            let d = x - mean;
            m2 += d * d;
            comp += d;
        }
        // Correct for the rounding of the mean (the sum of deviations would be 0 exactly).
        m2 -= comp * comp / n;
        Moments {
            count: values.len() as u64,
            mean,
            m2: m2.max(0.0),
        }
    }

    /// Combine with the moments of the values that follow.
    pub fn merge(&self, other: &Moments) -> Moments {
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
    pub count: u64,
    /// Mean of x.
    pub mean_x: f64,
    /// Mean of y.
    pub mean_y: f64,
    /// Sum of squared deviations of x.
    pub m2x: f64,
    /// Sum of squared deviations of y.
    pub m2y: f64,
    /// Sum of products of deviations.
    pub cxy: f64,
}

impl CoMoments {
    /// No pairs.
    pub const EMPTY: CoMoments = CoMoments {
        count: 0,
        mean_x: 0.0,
        mean_y: 0.0,
        m2x: 0.0,
        m2y: 0.0,
        cxy: 0.0,
    };

    /// Joint moments of two equally long slices (two passes).
    pub fn of(x: &[f64], y: &[f64]) -> CoMoments {
        let n = x.len().min(y.len());
        if n == 0 {
            return CoMoments::EMPTY;
        }
        let mx = compensated_sum(&x[..n]) / n as f64;
        let my = compensated_sum(&y[..n]) / n as f64;
        let (mut sxx, mut syy, mut sxy) = (0.0, 0.0, 0.0);
        for (a, b) in x[..n].iter().zip(&y[..n]) {
            let (dx, dy) = (a - mx, b - my);
            sxx += dx * dx;
            syy += dy * dy;
            sxy += dx * dy;
        }
        CoMoments {
            count: n as u64,
            mean_x: mx,
            mean_y: my,
            m2x: sxx,
            m2y: syy,
            cxy: sxy,
        }
    }

    /// Combine with the joint moments of the pairs that follow.
    pub fn merge(&self, o: &CoMoments) -> CoMoments {
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
    pub fn correlation(&self) -> Option<f64> {
        let d = (self.m2x * self.m2y).sqrt();
        (d > 0.0).then(|| (self.cxy / d).clamp(-1.0, 1.0))
    }
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
