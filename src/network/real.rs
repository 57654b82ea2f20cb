//! The float types a network computes in, and the two operations the
//! engine needs from them beyond arithmetic: transcendental functions with
//! the same bits on every machine, and a matrix product for the fast mode.

/// The float types a network can compute in.
pub(crate) trait Real:
    num_traits::Float
    + ndarray::LinalgScalar
    + ndarray::ScalarOperand
    + Send
    + Sync
    + std::fmt::Debug
    + std::fmt::Display
    + 'static
{
    /// Converts from `f64` (rounding to nearest for `f32`).
    fn from_f64(v: f64) -> Self;
    /// Converts to `f64` (exact).
    fn as_f64(self) -> f64;
    /// The same slice, when `Self` is `f64` (no copy needed); `None` otherwise.
    fn borrow_f64(s: &[f64]) -> Option<&[Self]>;
    /// `e^self` from the pure-Rust `libm` (the same bits on every machine).
    fn exp_det(self) -> Self;
    /// `tanh(self)` from `libm`.
    fn tanh_det(self) -> Self;
    /// `ln(self)` from `libm`.
    fn ln_det(self) -> Self;
    /// `ln(1 + self)` from `libm`.
    fn ln_1p_det(self) -> Self;
    /// `c = a b` through `matrixmultiply` (`m x k` times `k x n`, strides in
    /// elements).
    ///
    /// # Safety
    /// The pointers and strides must address valid `m x k`, `k x n` and
    /// `m x n` matrices, `c` not overlapping the others.
    #[allow(clippy::too_many_arguments)]
    #[doc(hidden)]
    unsafe fn gemm(
        m: usize,
        k: usize,
        n: usize,
        a: *const Self,
        rsa: isize,
        csa: isize,
        b: *const Self,
        rsb: isize,
        csb: isize,
        c: *mut Self,
        rsc: isize,
        csc: isize,
    );
}

macro_rules! real_math {
    ($exp:path, $tanh:path, $ln:path, $ln1p:path, $gemm:path) => {
        #[inline]
        fn exp_det(self) -> Self {
            $exp(self)
        }
        #[inline]
        fn tanh_det(self) -> Self {
            $tanh(self)
        }
        #[inline]
        fn ln_det(self) -> Self {
            $ln(self)
        }
        #[inline]
        fn ln_1p_det(self) -> Self {
            $ln1p(self)
        }
        #[inline]
        unsafe fn gemm(
            m: usize,
            k: usize,
            n: usize,
            a: *const Self,
            rsa: isize,
            csa: isize,
            b: *const Self,
            rsb: isize,
            csb: isize,
            c: *mut Self,
            rsc: isize,
            csc: isize,
        ) {
            $gemm(m, k, n, 1.0, a, rsa, csa, b, rsb, csb, 0.0, c, rsc, csc)
        }
    };
}

impl Real for f64 {
    #[inline]
    fn from_f64(v: f64) -> Self {
        v
    }
    #[inline]
    fn borrow_f64(s: &[f64]) -> Option<&[Self]> {
        Some(s)
    }
    #[inline]
    fn as_f64(self) -> f64 {
        self
    }
    real_math!(
        libm::exp,
        libm::tanh,
        libm::log,
        libm::log1p,
        matrixmultiply::dgemm
    );
}

impl Real for f32 {
    #[inline]
    fn from_f64(v: f64) -> Self {
        v as f32
    }
    #[inline]
    fn borrow_f64(_: &[f64]) -> Option<&[Self]> {
        None
    }
    #[inline]
    fn as_f64(self) -> f64 {
        self as f64
    }
    real_math!(
        libm::expf,
        libm::tanhf,
        libm::logf,
        libm::log1pf,
        matrixmultiply::sgemm
    );
}
