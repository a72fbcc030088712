//! Coupling coefficients from an inductance matrix.

/// Coupling coefficient matrix k_ij = M_ij / sqrt(L_i L_j) of a symmetric inductance matrix
/// (H) whose diagonal holds the self-inductances; the diagonal of the result is 1.
///
/// The sign of k follows the sign of M, i.e. the current directions set by each winding's axis.
pub fn coupling_matrix(inductance_h: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let n = inductance_h.len();
    (0..n)
        .map(|i| {
            (0..n)
                .map(|j| {
                    if i == j {
                        1.0
                    } else {
                        inductance_h[i][j] / (inductance_h[i][i] * inductance_h[j][j]).sqrt()
                    }
                })
                .collect()
        })
        .collect()
}

/// Coupling coefficient k = M / sqrt(L_a L_b) of one pair (H in, dimensionless out), computed
/// exactly as [`coupling_matrix`] does.
pub fn coupling(mutual_h: f64, self_a_h: f64, self_b_h: f64) -> f64 {
    mutual_h / (self_a_h * self_b_h).sqrt()
}
