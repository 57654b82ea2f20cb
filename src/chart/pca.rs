//! The first two principal components of a table, for two-dimensional views
//! of many-column data (decision maps, hidden-layer views).

use ndarray::{Array1, Array2, ArrayView2};

use crate::{Error, Result};

/// The first two principal components of a table and its projection on them.
#[derive(Clone, Debug, PartialEq)]
pub struct PrincipalComponents {
    /// The centred rows projected on the two components: rows x 2.
    pub projection: Array2<f64>,
    /// The two components as unit rows: 2 x columns.
    pub components: Array2<f64>,
    /// The column means subtracted before projecting: one per column.
    pub means: Array1<f64>,
    /// The variance along each component (the covariance's two largest eigenvalues).
    pub variances: [f64; 2],
    /// The total variance (the covariance's trace), to report shares:
    /// `variances[0] / total_variance` is the first component's share.
    pub total_variance: f64,
}

/// Computes the first two principal components of `data` (rows = samples,
/// columns = features).
///
/// ```text
/// m_j = mean of column j
/// C   = (X - m)^T (X - m) / (n - 1)                 (covariance, columns x columns)
/// C   = V diag(l) V^T,  l_1 >= l_2 >= ...           (cyclic Jacobi rotations)
/// projection = (X - m) [v_1 v_2]
/// ```
///
/// The eigen decomposition is the cyclic Jacobi method (common practice; it
/// is exact to rounding for symmetric matrices and needs no random start),
/// so results are deterministic. Its cost grows as columns³, which is
/// immediate for the tens of columns of tabular data and hidden layers.
///
/// **Sign convention:** an eigenvector's sign is arbitrary, so each
/// component is flipped to make its entry of largest magnitude positive (the
/// first such entry on ties). The same data therefore always gives the same
/// picture, not its mirror image.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when `data`
/// has fewer than 2 rows or 2 columns, or holds a value that is not finite
/// (naming its row and column).
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::principal_components_2;
/// use stratanet::ndarray::array;
///
/// let data = array![[1.0, 2.0, 0.0], [2.0, 4.1, 0.1], [3.0, 5.9, 0.0], [4.0, 8.0, 0.1]];
/// let pca = principal_components_2(data.view())?;
/// assert_eq!(pca.projection.dim(), (4, 2));
/// assert!(pca.variances[0] / pca.total_variance > 0.99);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn principal_components_2(data: ArrayView2<f64>) -> Result<PrincipalComponents> {
    let (n, d) = data.dim();
    let what = "principal components";
    if n < 2 {
        return Err(Error::input(
            what,
            format!("need at least 2 rows, found {n}"),
        ));
    }
    if d < 2 {
        return Err(Error::input(
            what,
            format!("need at least 2 columns, found {d}"),
        ));
    }
    if let Some(((row, column), value)) = data.indexed_iter().find(|(_, v)| !v.is_finite()) {
        return Err(Error::input(
            what,
            format!(
                "row {row}, column {column} holds {value}; remove or fill non-finite values first"
            ),
        ));
    }
    let means: Array1<f64> = (0..d).map(|j| data.column(j).sum() / n as f64).collect();
    let centred = &data - &means;
    let mut covariance = centred.t().dot(&centred) / (n as f64 - 1.0);
    let total_variance = covariance.diag().sum();
    let vectors = jacobi_eigen(&mut covariance);
    let mut order: Vec<usize> = (0..d).collect();
    order.sort_by(|&a, &b| {
        covariance[[b, b]]
            .total_cmp(&covariance[[a, a]])
            .then(a.cmp(&b))
    });
    let mut components = Array2::zeros((2, d));
    let mut variances = [0.0; 2];
    for (k, &i) in order.iter().take(2).enumerate() {
        let mut v = vectors.column(i).to_owned();
        let mut largest = 0;
        for j in 1..d {
            if v[j].abs() > v[largest].abs() {
                largest = j;
            }
        }
        if v[largest] < 0.0 {
            v.mapv_inplace(|x| -x);
        }
        components.row_mut(k).assign(&v);
        // Rounding can leave a tiny negative eigenvalue for flat data.
        variances[k] = covariance[[i, i]].max(0.0);
    }
    let projection = centred.dot(&components.t());
    Ok(PrincipalComponents {
        projection,
        components,
        means,
        variances,
        total_variance,
    })
}

/// Diagonalises the symmetric matrix `a` in place by cyclic Jacobi rotations
/// and returns the eigenvectors as columns; the eigenvalues are left on
/// `a`'s diagonal.
///
/// Each rotation zeroes one off-diagonal pair (p, q):
///
/// ```text
/// theta = (a_qq - a_pp) / (2 a_pq),  t = sign(theta) / (|theta| + sqrt(theta^2 + 1))
/// c = 1 / sqrt(t^2 + 1),  s = t c,   A <- J^T A J,  V <- V J
/// ```
fn jacobi_eigen(a: &mut Array2<f64>) -> Array2<f64> {
    let d = a.nrows();
    let mut v = Array2::eye(d);
    let scale: f64 = a.iter().map(|x| x * x).sum::<f64>().max(f64::MIN_POSITIVE);
    for _sweep in 0..100 {
        let mut off = 0.0;
        for p in 0..d {
            for q in (p + 1)..d {
                off += a[[p, q]] * a[[p, q]];
            }
        }
        // Converged when the off-diagonal mass is negligible next to the whole.
        if off <= 1e-30 * scale {
            break;
        }
        for p in 0..d {
            for q in (p + 1)..d {
                let apq = a[[p, q]];
                if apq == 0.0 {
                    continue;
                }
                let theta = (a[[q, q]] - a[[p, p]]) / (2.0 * apq);
                let t = if theta >= 0.0 { 1.0 } else { -1.0 }
                    / (theta.abs() + (theta * theta + 1.0).sqrt());
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for k in 0..d {
                    let (akp, akq) = (a[[k, p]], a[[k, q]]);
                    a[[k, p]] = c * akp - s * akq;
                    a[[k, q]] = s * akp + c * akq;
                }
                for k in 0..d {
                    let (apk, aqk) = (a[[p, k]], a[[q, k]]);
                    a[[p, k]] = c * apk - s * aqk;
                    a[[q, k]] = s * apk + c * aqk;
                }
                for k in 0..d {
                    let (vkp, vkq) = (v[[k, p]], v[[k, q]]);
                    v[[k, p]] = c * vkp - s * vkq;
                    v[[k, q]] = s * vkp + c * vkq;
                }
            }
        }
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn finds_the_long_axis_of_a_tilted_cloud() {
        // Points along (1, 1) / sqrt 2 with a little spread across it.
        let mut rows = Vec::new();
        for i in 0..25 {
            let t = i as f64 / 5.0 - 2.4;
            for across in [0.1, -0.1] {
                rows.extend_from_slice(&[t + across, t - across, 5.0]);
            }
        }
        let data = Array2::from_shape_vec((50, 3), rows).unwrap();
        let pca = principal_components_2(data.view()).unwrap();
        let c = std::f64::consts::FRAC_1_SQRT_2;
        assert!(
            (pca.components[[0, 0]] - c).abs() < 1e-9,
            "{:?}",
            pca.components
        );
        assert!((pca.components[[0, 1]] - c).abs() < 1e-9);
        assert!(pca.components[[0, 2]].abs() < 1e-9);
        assert!((pca.means[2] - 5.0).abs() < 1e-12);
        // The second component is across the cloud, with its largest entry positive.
        assert!((pca.components[[1, 0]].abs() - c).abs() < 1e-9);
        assert!(
            pca.components
                .row(1)
                .iter()
                .fold(0.0f64, |m, &x| if x.abs() > m.abs() { x } else { m })
                > 0.0
        );
        assert!(pca.variances[0] > pca.variances[1]);
        assert!((pca.variances[0] + pca.variances[1] - pca.total_variance).abs() < 1e-9);
        // Projections are the centred rows times the components.
        let first = (data[[0, 0]] - pca.means[0]) * c + (data[[0, 1]] - pca.means[1]) * c;
        assert!((pca.projection[[0, 0]] - first).abs() < 1e-9);
    }

    #[test]
    fn matches_a_known_two_by_two() {
        // By hand: the six rows have mean (0, 0); the sums of squares are
        // 12 in each column and the sum of products is 8, so the covariance
        // (divisor n - 1 = 5) is [[2.4, 1.6], [1.6, 2.4]]. A symmetric 2x2
        // [[a, b], [b, a]] has eigenvalues a + b and a - b with vectors
        // (1, 1) / sqrt 2 and (1, -1) / sqrt 2: here 4.0 and 0.8.
        let data = array![
            [1.0, 1.0],
            [-1.0, -1.0],
            [1.0, -1.0],
            [-1.0, 1.0],
            [2.0, 2.0],
            [-2.0, -2.0]
        ];
        let pca = principal_components_2(data.view()).unwrap();
        assert!(
            (pca.variances[0] - 4.0).abs() < 1e-12,
            "{:?}",
            pca.variances
        );
        assert!(
            (pca.variances[1] - 0.8).abs() < 1e-12,
            "{:?}",
            pca.variances
        );
        assert!((pca.total_variance - 4.8).abs() < 1e-12);
        let c = std::f64::consts::FRAC_1_SQRT_2;
        assert!((pca.components[[0, 0]].abs() - c).abs() < 1e-12);
        assert!((pca.components[[0, 0]] - pca.components[[0, 1]]).abs() < 1e-12);
        assert!((pca.components[[1, 0]] + pca.components[[1, 1]]).abs() < 1e-12);
    }

    #[test]
    fn refuses_unusable_tables() {
        assert!(principal_components_2(Array2::<f64>::zeros((1, 3)).view()).is_err());
        assert!(principal_components_2(Array2::<f64>::zeros((5, 1)).view()).is_err());
        let mut data = Array2::<f64>::zeros((3, 2));
        data[[2, 1]] = f64::NAN;
        let err = principal_components_2(data.view()).unwrap_err();
        assert!(err.to_string().contains("row 2, column 1"), "{err}");
        // Constant data is usable: all variance is zero.
        let flat = principal_components_2(Array2::<f64>::ones((4, 3)).view()).unwrap();
        assert_eq!(flat.variances, [0.0, 0.0]);
    }

    #[test]
    fn is_deterministic() {
        let data = array![
            [0.3, 1.2, -0.7, 2.0],
            [1.1, 0.2, 0.4, -1.0],
            [-0.6, 0.9, 1.8, 0.1],
            [0.0, -1.3, 0.5, 0.9],
            [2.2, 0.7, -0.1, 0.3]
        ];
        let a = principal_components_2(data.view()).unwrap();
        let b = principal_components_2(data.view()).unwrap();
        assert_eq!(a, b);
    }
}
