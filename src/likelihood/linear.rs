//! Small dense linear algebra for Newton steps (a handful of parameters), and
//! the vector operations over bins that build them.

/// Solves `matrix * x = rhs` for a symmetric positive-definite `matrix`
/// (row-major, `n x n`) by Cholesky decomposition, in place: `matrix` is
/// overwritten by its factor and `rhs` by the solution. Returns false when the
/// matrix is not positive definite.
pub fn solve_positive_definite(matrix: &mut [f64], rhs: &mut [f64], n: usize) -> bool {
    for j in 0..n {
        let mut diagonal = matrix[j * n + j];
        for k in 0..j {
            diagonal -= matrix[j * n + k] * matrix[j * n + k];
        }
        if diagonal <= 0.0 || !diagonal.is_finite() {
            return false;
        }
        let root = diagonal.sqrt();
        matrix[j * n + j] = root;
        for i in j + 1..n {
            let mut value = matrix[i * n + j];
            for k in 0..j {
                value -= matrix[i * n + k] * matrix[j * n + k];
            }
            matrix[i * n + j] = value / root;
        }
    }
    for i in 0..n {
        let mut value = rhs[i];
        for k in 0..i {
            value -= matrix[i * n + k] * rhs[k];
        }
        rhs[i] = value / matrix[i * n + i];
    }
    for i in (0..n).rev() {
        let mut value = rhs[i];
        for k in i + 1..n {
            value -= matrix[k * n + i] * rhs[k];
        }
        rhs[i] = value / matrix[i * n + i];
    }
    true
}

/// target += scale x values, element by element.
#[inline(always)]
pub fn add_scaled(target: &mut [f64], scale: f64, values: &[f64]) {
    for (t, v) in target.iter_mut().zip(values) {
        *t += scale * v;
    }
}

/// Lanes of the partial sums of the bin loops: independent sums the compiler
/// can keep in vector registers, since it may not reorder one floating-point
/// sum itself.
pub const LANES: usize = 4;

/// sum_j a_j b_j.
#[inline(always)]
pub fn dot(a: &[f64], b: &[f64]) -> f64 {
    let mut sums = [0.0; LANES];
    let chunks = a.len() / LANES * LANES;
    for (a, b) in a[..chunks]
        .chunks_exact(LANES)
        .zip(b[..chunks].chunks_exact(LANES))
    {
        for lane in 0..LANES {
            sums[lane] += a[lane] * b[lane];
        }
    }
    let tail: f64 = a[chunks..]
        .iter()
        .zip(&b[chunks..])
        .map(|(a, b)| a * b)
        .sum();
    sums.iter().sum::<f64>() + tail
}

/// sum_j w_j a_j b_j.
#[inline(always)]
pub fn weighted_dot(w: &[f64], a: &[f64], b: &[f64]) -> f64 {
    let mut sums = [0.0; LANES];
    let chunks = w.len() / LANES * LANES;
    for ((w, a), b) in w[..chunks]
        .chunks_exact(LANES)
        .zip(a[..chunks].chunks_exact(LANES))
        .zip(b[..chunks].chunks_exact(LANES))
    {
        for lane in 0..LANES {
            sums[lane] += w[lane] * a[lane] * b[lane];
        }
    }
    let tail: f64 = w[chunks..]
        .iter()
        .zip(&a[chunks..])
        .zip(&b[chunks..])
        .map(|((w, a), b)| w * a * b)
        .sum();
    sums.iter().sum::<f64>() + tail
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solves_a_known_system() {
        // [[4, 2], [2, 3]] x = [2, 1]  ->  x = [0.5, 0] (by hand).
        let mut matrix = [4.0, 2.0, 2.0, 3.0];
        let mut rhs = [2.0, 1.0];
        assert!(solve_positive_definite(&mut matrix, &mut rhs, 2));
        assert!((rhs[0] - 0.5).abs() < 1e-15 && rhs[1].abs() < 1e-15);
    }

    #[test]
    fn bin_sums_match_sums_by_hand() {
        // Seven elements: one group of four lanes and a tail of three.
        let a = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0];
        let b = [2.0; 7];
        assert_eq!(dot(&a, &b), 56.0);
        assert_eq!(weighted_dot(&a, &b, &b), 112.0);
        let mut target = [1.0; 7];
        add_scaled(&mut target, 0.5, &a);
        assert_eq!(target, [1.5, 2.0, 2.5, 3.0, 3.5, 4.0, 4.5]);
    }

    #[test]
    fn rejects_an_indefinite_matrix() {
        let mut matrix = [1.0, 2.0, 2.0, 1.0];
        let mut rhs = [1.0, 1.0];
        assert!(!solve_positive_definite(&mut matrix, &mut rhs, 2));
    }
}
