//! The float types a network computes in, and the functions the engine
//! needs from them beyond arithmetic, all with the same bits on every
//! machine: `exp`, `tanh` and the logistic function from
//! [`vecmath`](super::vecmath) (one value, or a whole slice at once on the
//! CPU's widest vectors), `ln` and `ln(1 + x)` from the pure-Rust `libm`.

use super::kernels::Element;
use super::vecmath;

/// The float types a network can compute in.
pub(crate) trait Real:
    num_traits::Float
    + Element
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
    /// `e^self` (vecmath: the same bits on every machine).
    fn exp_det(self) -> Self;
    /// `tanh(self)` (vecmath).
    fn tanh_det(self) -> Self;
    /// `1 / (1 + e^-self)` (vecmath, without overflow for either sign).
    fn logistic(self) -> Self;
    /// [`Real::exp_det`] on every element, vectorised (the same bits).
    fn exp_slice(v: &mut [Self]);
    /// [`Real::tanh_det`] on every element, vectorised (the same bits).
    fn tanh_slice(v: &mut [Self]);
    /// [`Real::logistic`] on every element, vectorised (the same bits).
    fn logistic_slice(v: &mut [Self]);
    /// `ln(self)` from `libm`.
    fn ln_det(self) -> Self;
    /// `ln(1 + self)` from `libm`.
    fn ln_1p_det(self) -> Self;
}

macro_rules! real {
    ($t:ty, $exp:path, $tanh:path, $logistic:path, $exps:path, $tanhs:path, $logistics:path, $ln:path, $ln1p:path) => {
        #[inline]
        fn exp_det(self) -> Self {
            $exp(self)
        }
        #[inline]
        fn tanh_det(self) -> Self {
            $tanh(self)
        }
        #[inline]
        fn logistic(self) -> Self {
            $logistic(self)
        }
        #[inline]
        fn exp_slice(v: &mut [Self]) {
            $exps(v)
        }
        #[inline]
        fn tanh_slice(v: &mut [Self]) {
            $tanhs(v)
        }
        #[inline]
        fn logistic_slice(v: &mut [Self]) {
            $logistics(v)
        }
        #[inline]
        fn ln_det(self) -> Self {
            $ln(self)
        }
        #[inline]
        fn ln_1p_det(self) -> Self {
            $ln1p(self)
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
    real!(
        f64,
        vecmath::exp_f64,
        vecmath::tanh_f64,
        vecmath::logistic_f64,
        vecmath::exp_slice_f64,
        vecmath::tanh_slice_f64,
        vecmath::logistic_slice_f64,
        libm::log,
        libm::log1p
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
    real!(
        f32,
        vecmath::exp_f32,
        vecmath::tanh_f32,
        vecmath::logistic_f32,
        vecmath::exp_slice_f32,
        vecmath::tanh_slice_f32,
        vecmath::logistic_slice_f32,
        libm::logf,
        libm::log1pf
    );
}
