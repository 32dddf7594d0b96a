//! Small dense linear algebra for Newton steps (a handful of parameters).

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
    fn rejects_an_indefinite_matrix() {
        let mut matrix = [1.0, 2.0, 2.0, 1.0];
        let mut rhs = [1.0, 1.0];
        assert!(!solve_positive_definite(&mut matrix, &mut rhs, 2));
    }
}
