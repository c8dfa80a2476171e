//! The law of propagation of uncertainty (JCGM 100:2008), evaluated exactly on the same model
//! code as the trials.
//!
//! Sensitivity coefficients c_i = df/dx_i at the input estimates come from forward-mode
//! automatic differentiation (`scalar::Taylor2`), as do the second and third derivatives of the
//! higher-order terms. With u_i the standard uncertainties and r_ij the correlation coefficients:
//!
//! - combined standard uncertainty (JCGM 100 eq. 13 with u(x_i, x_j) = r_ij u_i u_j, eq. 14):
//!   u_c^2 = sum_i sum_j c_i c_j r_ij u_i u_j;
//! - higher-order terms for independent inputs (JCGM 100 5.1.2, note):
//!   u^2 = u_c^2 + sum_i sum_j [ (1/2)(d2f/dxi dxj)^2 + (df/dxi)(d3f/dxi dxj^2) ] u_i^2 u_j^2;
//! - effective degrees of freedom (Welch-Satterthwaite, JCGM 100 G.4.1, eq. G.2b):
//!   nu_eff = u_c^4 / sum_i (c_i u_i)^4 / nu_i, truncated to the next lower integer for the
//!   coverage factor k_p = t_((1+p)/2)(nu_eff) (G.4.1 note 1 and G.3);
//! - coverage interval y +- k_p u_c with y = f(x).
//!
//! For t and readings inputs u_i is the scale s/sqrt(n) that goes with their degrees of freedom
//! (JCGM 100 4.2.3), not the standard deviation of the t distribution.

use crate::dist::student_t_quantile;
use crate::scalar::Taylor2;
use crate::scenario::Study;

/// The law of propagation for one measurand (SI).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct MeasurandLpu {
    /// y = f(x) at the input estimates.
    pub(crate) estimate: f64,
    /// c_i per input (0 for constants), SI measurand unit per SI input unit.
    pub(crate) sensitivities: Vec<f64>,
    /// First-order combined standard uncertainty u_c, with correlations.
    pub(crate) standard_uncertainty: f64,
    /// With the higher-order terms of JCGM 100 5.1.2; `None` when inputs are correlated (the
    /// terms are derived for independent inputs) or the sum is negative.
    pub(crate) higher_order_standard_uncertainty: Option<f64>,
    /// Welch-Satterthwaite effective degrees of freedom (infinite when no input carries any).
    pub(crate) effective_dof: f64,
    /// k_p from the t distribution with the truncated effective degrees of freedom.
    pub(crate) coverage_factor: f64,
    /// y +- k_p u_c.
    pub(crate) interval: (f64, f64),
}

/// The law of propagation for every measurand.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Lpu {
    /// Per measurand, `None` where the model or its derivatives are not finite at the estimates.
    pub(crate) measurands: Vec<Option<MeasurandLpu>>,
    /// Covariance matrix of the measurands, u(y_a, y_b) = sum_i sum_j c_ai c_bj r_ij u_i u_j.
    pub(crate) covariance: Vec<Vec<f64>>,
}

/// Apply the law of propagation to a study.
pub(crate) fn propagate(study: &Study) -> Lpu {
    let n = study.inputs.len();
    let nm = study.measurands.len();
    let x: Vec<f64> = study.inputs.iter().map(|q| q.estimate()).collect();
    let u: Vec<f64> = study
        .inputs
        .iter()
        .map(|q| q.gum_standard_uncertainty())
        .collect();
    let varying: Vec<usize> = (0..n).filter(|&i| u[i] > 0.0).collect();
    let y = study.model.evaluate_point::<f64>(&x);
    let mut c = vec![vec![0.0; n]; nm];
    let mut higher = vec![0.0; nm];
    for (a, &i) in varying.iter().enumerate() {
        for &j in &varying[a..] {
            let args: Vec<Taylor2> = (0..n)
                .map(|l| Taylor2::seeded(x[l], l == i, l == j))
                .collect();
            let out = study.model.evaluate_point(&args);
            for (m, o) in out.iter().enumerate() {
                if i == j {
                    c[m][i] = o.d_s();
                    higher[m] += (0.5 * o.d_st().powi(2) + o.d_s() * o.d_stt()) * u[i].powi(4);
                } else {
                    higher[m] += (o.d_st().powi(2) + o.d_s() * o.d_stt() + o.d_t() * o.d_sst())
                        * u[i].powi(2)
                        * u[j].powi(2);
                }
            }
        }
    }
    let r = |i: usize, j: usize| study.correlations.coefficient(i, j);
    let cov = |a: usize, b: usize| -> f64 {
        let mut s = 0.0;
        for &i in &varying {
            for &j in &varying {
                s += c[a][i] * c[b][j] * r(i, j) * u[i] * u[j];
            }
        }
        s
    };
    let covariance: Vec<Vec<f64>> = (0..nm)
        .map(|a| (0..nm).map(|b| cov(a, b)).collect())
        .collect();
    let p = study.coverage;
    let measurands = (0..nm)
        .map(|m| {
            let uc2 = covariance[m][m].max(0.0);
            let uc = uc2.sqrt();
            let denominator: f64 = varying
                .iter()
                .filter_map(|&i| {
                    study.inputs[i]
                        .dof
                        .filter(|d| d.is_finite())
                        .map(|nu| (c[m][i] * u[i]).powi(4) / nu)
                })
                .sum();
            let effective_dof = if denominator > 0.0 {
                uc2 * uc2 / denominator
            } else {
                f64::INFINITY
            };
            let dof_for_k = if effective_dof.is_finite() {
                effective_dof.floor().max(1.0)
            } else {
                f64::INFINITY
            };
            let k = student_t_quantile(0.5 * (1.0 + p), dof_for_k);
            let h2 = uc2 + higher[m];
            let higher_order = (study.correlations.is_empty() && h2 >= 0.0).then(|| h2.sqrt());
            let lpu = MeasurandLpu {
                estimate: y[m],
                sensitivities: c[m].clone(),
                standard_uncertainty: uc,
                higher_order_standard_uncertainty: higher_order,
                effective_dof,
                coverage_factor: k,
                interval: (y[m] - k * uc, y[m] + k * uc),
            };
            let finite = lpu.estimate.is_finite()
                && lpu.standard_uncertainty.is_finite()
                && lpu.coverage_factor.is_finite()
                && lpu.sensitivities.iter().all(|s| s.is_finite());
            finite.then_some(lpu)
        })
        .collect();
    Lpu {
        measurands,
        covariance,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::load_str;

    // Product of two independent zero-mean unit normals (REFERENCES 4, Goodman 1960): first
    // order u = 0, with the higher-order terms u = 1.
    #[test]
    fn product_of_normals() {
        let s = load_str(
            r#"
laser = false
[inputs.a]
dist = "normal"
mean = 0
sd = 1
[inputs.b]
dist = "normal"
mean = 0
sd = 1
[measurands.y]
formula = "a * b"
"#,
            "product.toml",
        )
        .unwrap();
        let l = propagate(&s);
        let m = l.measurands[0].as_ref().unwrap();
        assert_eq!(m.standard_uncertainty, 0.0);
        assert!((m.higher_order_standard_uncertainty.unwrap() - 1.0).abs() < 1e-15);
    }
}
