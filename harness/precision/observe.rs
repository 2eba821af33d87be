//! What the shadow run measures per operation: the working type's spacing
//! and roundoff, and the [`Collector`] that accumulates, per site, local
//! rounding error, cancellation, carried error, overflow (hidden or not),
//! underflow, amplifiers and divergences.

use crate::eval::ir::At;
use crate::eval::lanes::Opcode;
use crate::eval::shadow::{self, Event, Observe};

/// Spacing of the working type's numbers around `x` (f16 or f32).
pub fn ulp(x: f64, half: bool) -> f64 {
    let (min_exp, mant, max) = if half {
        (-14, 10, 65504.0)
    } else {
        (-126, 23, f32::MAX as f64)
    };
    let a = x.abs().min(max);
    // The binary exponent of `a` from its bits (every value here is far
    // above f64's subnormal range or clamped to the working type's).
    let e = if a == 0.0 || !a.is_finite() {
        min_exp
    } else {
        (((a.to_bits() >> 52) & 0x7ff) as i32 - 1023).max(min_exp)
    };
    f64::from_bits(((e - mant + 1023) as u64) << 52)
}

pub(super) fn min_normal(half: bool) -> f64 {
    if half {
        2f64.powi(-14)
    } else {
        f64::from(f32::MIN_POSITIVE)
    }
}

/// Unit roundoff of the working type (half its ULP at 1).
pub(super) fn eps(half: bool) -> f64 {
    if half {
        2f64.powi(-11)
    } else {
        2f64.powi(-24)
    }
}

fn precision_bits(half: bool) -> f64 {
    if half {
        11.0
    } else {
        24.0
    }
}

#[derive(Default)]
pub(super) struct Acc {
    pub(super) count: usize,
    pub(super) sum_local: f64,
    pub(super) max_local: f64,
    pub(super) max_cancel: f64,
    pub(super) cancel_at: Option<(usize, f64, Vec<f64>)>,
    pub(super) cancellations: usize,
    pub(super) max_carried: f64,
    pub(super) carried_at: Option<(usize, f64, Vec<f64>)>,
    pub(super) overflow: usize,
    pub(super) overflow_at: Option<(usize, f64, Vec<f64>)>,
    pub(super) hidden: usize,
    pub(super) hidden_by: Option<At>,
    pub(super) subnormal: usize,
    pub(super) flushed: usize,
    pub(super) underflow_at: Option<(usize, f64, Vec<f64>)>,
    pub(super) amp_kind: Option<String>,
    /// pow: the exponent; division: the smallest denominator.
    pub(super) amp_factor: f64,
    /// Largest relative error of the result where the amplifier acts, and
    /// where.
    pub(super) amp_rel: f64,
    pub(super) amp_at: Option<(usize, f64, Vec<f64>)>,
    pub(super) divergences: usize,
    pub(super) divergence_at: Option<usize>,
    pub(super) op: Option<(Opcode, bool)>,
}

/// Collects events per site over a sweep.
pub(super) struct Collector {
    pub(super) acc: Vec<Acc>,
    pub(super) cancel_bits: f64,
    pub(super) start: usize,
    /// Per lane of the current batch: sites that overflowed, and the first
    /// operation that took an infinite operand to a finite result after.
    pub(super) overflowed: Vec<Vec<At>>,
    pub(super) absorbed: Vec<Option<At>>,
}

pub(super) fn rel(w: f64, s: f64) -> f64 {
    if w == s {
        0.0
    } else if s == 0.0 {
        f64::INFINITY
    } else {
        ((w - s) / s).abs()
    }
}

impl Observe for Collector {
    fn kernel(&mut self, e: &Event) {
        if !shadow::is_float_op(e.op) {
            return;
        }
        let point = self.start + e.lane;
        let operands = || e.args_w[..e.arity].to_vec();
        let a = &mut self.acc[e.at as usize];
        a.op = Some((e.op, e.half));
        a.count += 1;
        if e.w.is_finite() && e.local.is_finite() {
            let l = (e.w - e.local).abs() / ulp(e.local, e.half);
            a.sum_local += l;
            a.max_local = a.max_local.max(l);
        }
        let finite_in = e.args_w[..e.arity].iter().all(|x| x.is_finite());
        // Cancellation in + and -.
        if matches!(e.op, Opcode::FAdd | Opcode::FSub) && finite_in {
            let m = e.args_w[0].abs().max(e.args_w[1].abs());
            if m > 0.0 {
                let bits = if e.w == 0.0 {
                    precision_bits(e.half)
                } else {
                    (m / e.w.abs()).log2().max(0.0)
                };
                if bits >= self.cancel_bits {
                    a.cancellations += 1;
                }
                if bits > a.max_cancel {
                    a.max_cancel = bits;
                    a.cancel_at = Some((point, bits, operands()));
                }
            }
        }
        if e.w.is_finite() && e.s.is_finite() {
            let r = rel(e.w, e.s);
            if r > a.max_carried {
                a.max_carried = r;
                a.carried_at = Some((point, r, operands()));
            }
        }
        // Overflow: from finite operands to infinity where f64 stays finite.
        if e.w.is_infinite() && finite_in && e.local.is_finite() {
            a.overflow += 1;
            if a.overflow_at.is_none() {
                a.overflow_at = Some((point, e.local, operands()));
            }
            self.overflowed[e.lane].push(e.at);
        }
        if e.w.is_finite()
            && !finite_in
            && !self.overflowed[e.lane].is_empty()
            && self.absorbed[e.lane].is_none()
        {
            self.absorbed[e.lane] = Some(e.at);
        }
        // Underflow.
        let a = &mut self.acc[e.at as usize];
        if e.local != 0.0 && e.local.abs() < min_normal(e.half) && e.local.is_finite() {
            if e.w == 0.0 {
                a.flushed += 1;
            } else {
                a.subnormal += 1;
            }
            if a.underflow_at.is_none() {
                a.underflow_at = Some((point, e.local, operands()));
            }
        }
        // Amplifiers.
        let ro = rel(e.w, e.s);
        match e.op {
            Opcode::FPow => {
                let n = e.args_w[1];
                if n == n.trunc() && n.abs() >= 2.0 && ro.is_finite() {
                    // rel(result) ≈ |n| · rel(base) + pow's own rounding.
                    a.amp_kind = Some(format!("pow with integral exponent {n}"));
                    a.amp_factor = a.amp_factor.max(n.abs());
                    if a.amp_at.is_none() || ro > a.amp_rel {
                        a.amp_rel = ro;
                        a.amp_at = Some((point, ro, operands()));
                    }
                }
            }
            Opcode::FDiv => {
                let den = e.args_w[1];
                if den != 0.0 && den.abs() < 0.125 && ro.is_finite() {
                    a.amp_kind = Some("division by a small denominator".into());
                    if a.amp_at.is_none() || den.abs() < a.amp_factor {
                        a.amp_factor = den.abs();
                    }
                    if a.amp_at.is_none() || ro > a.amp_rel {
                        a.amp_rel = ro;
                        a.amp_at = Some((point, ro, operands()));
                    }
                }
            }
            _ => {}
        }
    }

    fn diverge(&mut self, at: At, lane: usize) {
        let a = &mut self.acc[at as usize];
        a.divergences += 1;
        a.divergence_at.get_or_insert(self.start + lane);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ulp_is_the_spacing_of_the_working_type() {
        // IEEE 754 binary32: 2^-23 at 1, 2^-24 in [0.5, 1), 2^-149 below
        // 2^-126; binary16: 2^-10 at 1, 2^-24 below 2^-14.
        assert_eq!(ulp(1.0, false), 2f64.powi(-23));
        assert_eq!(ulp(-0.75, false), 2f64.powi(-24));
        assert_eq!(ulp(0.0, false), 2f64.powi(-149));
        assert_eq!(ulp(1e-40, false), 2f64.powi(-149));
        assert_eq!(ulp(3.0e38, false), 2f64.powi(127 - 23));
        assert_eq!(ulp(1.0, true), 2f64.powi(-10));
        assert_eq!(ulp(1e-6, true), 2f64.powi(-24));
        assert_eq!(ulp(65504.0, true), 32.0);
        assert_eq!(ulp(1e9, true), 32.0);
    }
}
