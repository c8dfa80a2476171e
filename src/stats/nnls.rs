//! Non-negative weighted least squares for a handful of unknowns: minimise
//! sum_i w_i (y_i - sum_j a_ij c_j)^2 subject to c_j >= 0, by trying every set of free
//! unknowns (the others held at 0) and keeping the best solution that is non-negative. Exact
//! for the few unknowns it is used with (at most 6, 63 sets); the optimum is among these sets
//! because at it the active constraints fix some unknowns at 0 and the rest solve the
//! unconstrained problem (the Karush-Kuhn-Tucker conditions; Lawson and Hanson, Solving Least
//! Squares Problems, 1974, ch. 23).

/// The fitted unknowns and the weighted sum of squared residuals; `None` when no set of
/// unknowns gives a solution (every column zero or the weights not positive).
pub fn nonnegative_least_squares(
    columns: &[Vec<f64>],
    y: &[f64],
    weights: &[f64],
) -> Option<(Vec<f64>, f64)> {
    let k = columns.len();
    if k == 0 || k > 6 || y.is_empty() {
        return None;
    }
    let mut best: Option<(Vec<f64>, f64)> = None;
    for mask in 1u32..(1 << k) {
        let free: Vec<usize> = (0..k).filter(|j| mask & (1 << j) != 0).collect();
        let Some(sol) = solve_weighted(columns, y, weights, &free) else {
            continue;
        };
        if sol.iter().any(|c| *c < 0.0 || !c.is_finite()) {
            continue;
        }
        let mut c = vec![0.0; k];
        for (j, v) in free.iter().zip(&sol) {
            c[*j] = *v;
        }
        let ssr = residual(columns, y, weights, &c);
        if best.as_ref().is_none_or(|b| ssr < b.1) {
            best = Some((c, ssr));
        }
    }
    best
}

fn residual(columns: &[Vec<f64>], y: &[f64], weights: &[f64], c: &[f64]) -> f64 {
    (0..y.len())
        .map(|i| {
            let fit: f64 = columns.iter().zip(c).map(|(col, cj)| col[i] * cj).sum();
            weights[i] * (y[i] - fit).powi(2)
        })
        .sum()
}

/// The weighted least-squares solution over the `free` columns, by the normal equations and
/// Gaussian elimination with partial pivoting (after scaling each column to unit weighted
/// norm, so that columns of very different sizes stay well conditioned).
fn solve_weighted(
    columns: &[Vec<f64>],
    y: &[f64],
    weights: &[f64],
    free: &[usize],
) -> Option<Vec<f64>> {
    let n = free.len();
    let norm: Vec<f64> = free
        .iter()
        .map(|&j| {
            columns[j]
                .iter()
                .zip(weights)
                .map(|(a, w)| w * a * a)
                .sum::<f64>()
                .sqrt()
        })
        .collect();
    if norm.iter().any(|s| !(*s > 0.0 && s.is_finite())) {
        return None;
    }
    let mut m = vec![vec![0.0; n + 1]; n];
    for (r, &jr) in free.iter().enumerate() {
        for (c, &jc) in free.iter().enumerate() {
            m[r][c] = (0..y.len())
                .map(|i| weights[i] * columns[jr][i] * columns[jc][i])
                .sum::<f64>()
                / (norm[r] * norm[c]);
        }
        m[r][n] = (0..y.len())
            .map(|i| weights[i] * columns[jr][i] * y[i])
            .sum::<f64>()
            / norm[r];
    }
    for col in 0..n {
        let pivot = (col..n).max_by(|a, b| m[*a][col].abs().total_cmp(&m[*b][col].abs()))?;
        if m[pivot][col].abs() < 1e-13 {
            return None;
        }
        m.swap(col, pivot);
        let pivot_row = m[col].clone();
        for (r, row) in m.iter_mut().enumerate() {
            if r != col {
                let f = row[col] / pivot_row[col];
                for (x, p) in row[col..].iter_mut().zip(&pivot_row[col..]) {
                    *x -= f * p;
                }
            }
        }
    }
    Some((0..n).map(|r| m[r][n] / m[r][r] / norm[r]).collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    // An exact fit is recovered; a negative unconstrained coefficient is held at 0 and the rest
    // refitted [calc].
    #[test]
    fn recovers_and_constrains() {
        let x: Vec<f64> = (1..=8).map(f64::from).collect();
        let cols = vec![x.iter().map(|x| 1.0 / x).collect(), vec![1.0; 8], x.clone()];
        let y: Vec<f64> = x.iter().map(|x| 3.0 / x + 0.5 + 0.25 * x).collect();
        let w = vec![1.0; 8];
        let (c, ssr) = nonnegative_least_squares(&cols, &y, &w).unwrap();
        assert_relative_eq!(c[0], 3.0, max_relative = 1e-10);
        assert_relative_eq!(c[1], 0.5, max_relative = 1e-10);
        assert_relative_eq!(c[2], 0.25, max_relative = 1e-10);
        assert!(ssr < 1e-20);
        // y = 2/x - 0.3: the constant would be negative, so it is 0 and 1/x takes the rest.
        let y2: Vec<f64> = x.iter().map(|x| 2.0 / x - 0.3).collect();
        let (c2, _) = nonnegative_least_squares(&cols, &y2, &w).unwrap();
        assert_eq!(c2[1], 0.0);
        assert!(c2.iter().all(|v| *v >= 0.0));
    }
}
