//! Smoothing kernels W(r, h) and their gradients, in 2D and 3D.
//!
//! Every kernel is written as W(r, h) = σ_d / h^d · f(q) with q = r/h. The gradient is returned as
//! the scalar F(r) = (1/r) ∂W/∂r, so that ∇_a W_ab = r_ab · F(|r_ab|) with r_ab = x_a − x_b.

/// The kernel families Lamella offers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KernelKind {
    /// Wendland C2 (Wendland 1995, Adv. Comput. Math. 4), support 2h. The default.
    WendlandC2,
    /// Cubic B-spline (Monaghan & Lattanzio 1985, Astron. Astrophys. 149), support 2h.
    CubicSpline,
    /// Quintic spline (Morris 1996, PhD thesis; Morris, Fox & Zhu 1997), support 3h.
    QuinticSpline,
}

impl KernelKind {
    /// Support radius in units of h.
    pub fn support_in_h(self) -> f64 {
        match self {
            KernelKind::WendlandC2 | KernelKind::CubicSpline => 2.0,
            KernelKind::QuinticSpline => 3.0,
        }
    }

    /// Normalisation σ_d such that ∫ W dV = 1 in `dim` dimensions (2 or 3).
    fn sigma(self, dim: usize) -> f64 {
        use std::f64::consts::PI;
        match (self, dim) {
            (KernelKind::WendlandC2, 2) => 7.0 / (4.0 * PI),
            (KernelKind::WendlandC2, _) => 21.0 / (16.0 * PI),
            (KernelKind::CubicSpline, 2) => 10.0 / (7.0 * PI),
            (KernelKind::CubicSpline, _) => 1.0 / PI,
            (KernelKind::QuinticSpline, 2) => 7.0 / (478.0 * PI),
            (KernelKind::QuinticSpline, _) => 1.0 / (120.0 * PI),
        }
    }
}

/// A kernel with its smoothing length and dimension fixed; cheap to copy.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Kernel {
    kind: KernelKind,
    h: f64,
    /// 1/h, so that q = r/h costs a multiplication in the pair loops.
    inverse_h: f64,
    /// σ_d / h^d.
    value_scale: f64,
    /// σ_d / h^(d+2), the scale of F(r) = (1/r) dW/dr.
    gradient_scale: f64,
}

impl Kernel {
    /// A kernel of family `kind` with smoothing length `h` (m) in `dim` dimensions (2 or 3).
    pub fn new(kind: KernelKind, h: f64, dim: usize) -> Self {
        assert!(dim == 2 || dim == 3, "kernels exist in 2D and 3D only");
        let sigma = kind.sigma(dim);
        let hd = h.powi(dim as i32);
        Kernel {
            kind,
            h,
            inverse_h: 1.0 / h,
            value_scale: sigma / hd,
            gradient_scale: sigma / (hd * h * h),
        }
    }

    /// The kernel family.
    pub fn kind(&self) -> KernelKind {
        self.kind
    }

    /// Smoothing length h (m).
    pub fn smoothing_length(&self) -> f64 {
        self.h
    }

    /// Radius beyond which W and its gradient vanish (m).
    pub fn support_radius(&self) -> f64 {
        self.kind.support_in_h() * self.h
    }

    /// W(r) (1/m^d).
    #[inline]
    pub fn value(&self, r: f64) -> f64 {
        self.value_scale * shape(self.kind, r * self.inverse_h)
    }

    /// F(r) = (1/r) ∂W/∂r (1/m^(d+2)), finite at r → 0; ∇_a W_ab = r_ab F(|r_ab|).
    #[inline]
    pub fn gradient_factor(&self, r: f64) -> f64 {
        self.gradient_scale * shape_derivative_over_q(self.kind, r * self.inverse_h)
    }
}

/// f(q) of each family (dimensionless).
#[inline]
fn shape(kind: KernelKind, q: f64) -> f64 {
    match kind {
        KernelKind::WendlandC2 => {
            if q < 2.0 {
                let t = 1.0 - 0.5 * q;
                let t2 = t * t;
                t2 * t2 * (2.0 * q + 1.0)
            } else {
                0.0
            }
        }
        KernelKind::CubicSpline => {
            if q < 1.0 {
                1.0 - 1.5 * q * q + 0.75 * q * q * q
            } else if q < 2.0 {
                let t = 2.0 - q;
                0.25 * t * t * t
            } else {
                0.0
            }
        }
        KernelKind::QuinticSpline => {
            let p5 = |t: f64| {
                let t2 = t * t;
                t2 * t2 * t
            };
            let mut f = 0.0;
            if q < 3.0 {
                f += p5(3.0 - q);
            }
            if q < 2.0 {
                f -= 6.0 * p5(2.0 - q);
            }
            if q < 1.0 {
                f += 15.0 * p5(1.0 - q);
            }
            f
        }
    }
}

/// (1/q) df/dq of each family (dimensionless), written without dividing by q.
#[inline]
fn shape_derivative_over_q(kind: KernelKind, q: f64) -> f64 {
    match kind {
        KernelKind::WendlandC2 => {
            // d/dq [(1 − q/2)^4 (2q + 1)] = −5 q (1 − q/2)^3
            if q < 2.0 {
                let t = 1.0 - 0.5 * q;
                -5.0 * t * t * t
            } else {
                0.0
            }
        }
        KernelKind::CubicSpline => {
            if q < 1.0 {
                -3.0 + 2.25 * q
            } else if q < 2.0 {
                let t = 2.0 - q;
                -0.75 * t * t / q
            } else {
                0.0
            }
        }
        KernelKind::QuinticSpline => {
            let p4 = |t: f64| {
                let t2 = t * t;
                t2 * t2
            };
            if q >= 3.0 {
                return 0.0;
            }
            if q < 1.0 {
                // −5(3−q)⁴ + 30(2−q)⁴ − 75(1−q)⁴ expands to −120q + 120q³ − 50q⁴.
                return -120.0 + 120.0 * q * q - 50.0 * q * q * q;
            }
            let mut d = -5.0 * p4(3.0 - q);
            if q < 2.0 {
                d += 30.0 * p4(2.0 - q);
            }
            d / q
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const KINDS: [KernelKind; 3] = [
        KernelKind::WendlandC2,
        KernelKind::CubicSpline,
        KernelKind::QuinticSpline,
    ];

    /// ∫ W dV over the support by the midpoint rule in polar / spherical shells.
    fn integral(kernel: &Kernel, dim: usize) -> f64 {
        let n = 20_000;
        let rmax = kernel.support_radius();
        let dr = rmax / n as f64;
        (0..n)
            .map(|k| {
                let r = (k as f64 + 0.5) * dr;
                let shell = if dim == 2 {
                    2.0 * std::f64::consts::PI * r
                } else {
                    4.0 * std::f64::consts::PI * r * r
                };
                kernel.value(r) * shell * dr
            })
            .sum()
    }

    #[test]
    fn every_kernel_integrates_to_one_in_2d_and_3d() {
        for kind in KINDS {
            for dim in [2, 3] {
                let kernel = Kernel::new(kind, 0.37, dim);
                let total = integral(&kernel, dim);
                assert!(
                    (total - 1.0).abs() < 1e-6,
                    "{kind:?} {dim}D integrates to {total}"
                );
            }
        }
    }

    #[test]
    fn support_is_compact() {
        for kind in KINDS {
            let kernel = Kernel::new(kind, 0.5, 2);
            let rs = kernel.support_radius();
            assert_eq!(kernel.value(rs), 0.0);
            assert_eq!(kernel.gradient_factor(rs), 0.0);
            assert_eq!(kernel.value(rs * 1.5), 0.0);
            assert!(kernel.value(rs * 0.999) > 0.0);
            assert!(kernel.gradient_factor(rs * 0.999) < 0.0);
        }
    }

    #[test]
    fn gradient_matches_finite_difference_and_is_antisymmetric() {
        for kind in KINDS {
            let kernel = Kernel::new(kind, 0.8, 3);
            for k in 1..60 {
                let r = k as f64 * kernel.support_radius() / 60.0;
                let eps = 1e-6;
                let fd = (kernel.value(r + eps) - kernel.value(r - eps)) / (2.0 * eps);
                let analytic = kernel.gradient_factor(r) * r;
                assert!(
                    (fd - analytic).abs() <= 1e-6 * (1.0 + analytic.abs()),
                    "{kind:?} at r = {r}: {fd} vs {analytic}"
                );
                // ∇_a W_ab = r_ab F and ∇_b W_ba = r_ba F = −∇_a W_ab: same F, opposite r.
                let rab = [0.3 * r, -0.5 * r];
                let ga: Vec<f64> = rab.iter().map(|c| c * kernel.gradient_factor(r)).collect();
                let gb: Vec<f64> = rab.iter().map(|c| -c * kernel.gradient_factor(r)).collect();
                assert_eq!(ga[0], -gb[0]);
                assert_eq!(ga[1], -gb[1]);
            }
        }
    }

    #[test]
    fn gradient_factor_is_finite_at_the_origin() {
        for kind in KINDS {
            let kernel = Kernel::new(kind, 1.0, 2);
            assert!(kernel.gradient_factor(0.0).is_finite());
        }
    }
}
