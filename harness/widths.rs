//! Vector widths: the instruction sets the hot loops are compiled for, and the one
//! macro, `at_widths!`, that compiles a loop for each and calls the one chosen.
//!
//! The evaluator's lane kernels, the reference models' column forms, the comparison's
//! quick test and the f64↔f32 column conversions are each compiled three times: for the
//! target's baseline and, on x86-64, with AVX2 and with AVX-512 enabled. IEEE operations
//! give the same bits at any vector width, so the choice never changes a result; tests
//! run every width the machine has and compare.
//!
//! Calling a function compiled for instructions the machine lacks is undefined
//! behaviour. So the width a call runs at is a [`Runs`], which can only be made for a
//! width this machine runs ([`Runs::best`], [`Runs::new`], [`Runs::all`]): the one check
//! that makes those calls sound is in its constructors, not repeated at each call.

use std::sync::atomic::{AtomicU8, Ordering};

/// The vector instructions the hot loops are compiled for, narrowest first.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Width {
    /// The target's baseline (SSE2 on x86-64).
    Baseline,
    /// x86-64 with AVX2: 8 lanes of 32 bits per instruction.
    Avx2,
    /// x86-64 with AVX-512 (the foundation set): 16 lanes per instruction.
    Avx512,
}

impl Width {
    /// The widest set this machine runs.
    pub fn best() -> Width {
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx512f") {
                return Width::Avx512;
            }
            if std::arch::is_x86_feature_detected!("avx2") {
                return Width::Avx2;
            }
        }
        Width::Baseline
    }

    /// Every set this machine runs, narrowest first (for tests that compare them).
    pub fn available() -> Vec<Width> {
        Runs::all().into_iter().map(Runs::width).collect()
    }
}

/// A [`Width`] this machine runs: the proof that the copy of a loop compiled for it may
/// be called. Made only by the constructors here, which check.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Runs(Width);

impl Runs {
    /// The widest width this machine runs.
    #[inline]
    pub fn best() -> Runs {
        Runs(Width::best())
    }

    /// `width`, if this machine runs it.
    pub fn new(width: Width) -> Option<Runs> {
        (width <= Width::best()).then_some(Runs(width))
    }

    /// Every width this machine runs, narrowest first.
    pub fn all() -> Vec<Runs> {
        [Width::Baseline, Width::Avx2, Width::Avx512]
            .into_iter()
            .filter_map(Runs::new)
            .collect()
    }

    /// The width.
    #[inline(always)]
    pub fn width(self) -> Width {
        self.0
    }
}

/// A process-wide choice of width: [`Runs::best`] until [`Chosen::set`] names another.
/// It holds `1 + Width as u8` of a [`Runs`] (0 until first read or set), so what it gives
/// back is always a width this machine runs.
pub struct Chosen(AtomicU8);

impl Chosen {
    /// Not chosen yet: the first [`Chosen::get`] chooses [`Runs::best`].
    pub const fn new() -> Chosen {
        Chosen(AtomicU8::new(0))
    }

    /// Run at `at` from now on.
    pub fn set(&self, at: Runs) {
        self.0.store(1 + at.0 as u8, Ordering::Relaxed);
    }

    /// The width chosen: one relaxed load once chosen.
    #[inline(always)]
    pub fn get(&self) -> Runs {
        Chosen::held(self.0.load(Ordering::Relaxed)).unwrap_or_else(|| self.choose())
    }

    /// The `Runs` whose `1 + Width as u8` is `a`; `None` for 0 (not chosen).
    #[inline(always)]
    fn held(a: u8) -> Option<Runs> {
        match a {
            0 => None,
            1 => Some(Runs(Width::Baseline)),
            2 => Some(Runs(Width::Avx2)),
            3 => Some(Runs(Width::Avx512)),
            other => unreachable!("a `Chosen` held {other}, not 1 + a width"),
        }
    }

    #[cold]
    fn choose(&self) -> Runs {
        let best = Runs::best();
        // A concurrent `set` wins; only `set` and this store, and both store a `Runs`.
        match self
            .0
            .compare_exchange(0, 1 + best.0 as u8, Ordering::Relaxed, Ordering::Relaxed)
        {
            Ok(_) => best,
            Err(a) => Chosen::held(a).expect("a width, once stored, stays"),
        }
    }
}

impl Default for Chosen {
    fn default() -> Chosen {
        Chosen::new()
    }
}

/// Defines a function whose body is compiled for every [`Width`] and run at the width its
/// first parameter, a [`Runs`], names:
///
/// ```text
/// at_widths! {
///     /// Doubles every value.
///     pub fn double<T: Copy>(at: Runs, xs: &mut [f32]) {
///         for x in xs {
///             *x *= 2.0;
///         }
///     }
/// }
/// ```
///
/// The body becomes an always-inlined function, called from a baseline copy and, on
/// x86-64, from copies with `#[target_feature(enable = "avx2")]` and `"avx512f"`, so each
/// copy is the body compiled with that set's instructions. Generic parameters take one
/// bound each; the body is called with every generic parameter named, so a type that no
/// argument mentions (a kernel's operation) still reaches it.
macro_rules! at_widths {
    (
        $(#[$meta:meta])*
        $vis:vis fn $name:ident $(<$($g:ident : $bound:path),* $(,)?>)?
            ($at:ident : Runs $(, $arg:ident : $ty:ty)* $(,)?) $(-> $ret:ty)?
        $body:block
    ) => {
        $(#[$meta])*
        $vis fn $name $(<$($g: $bound),*>)? ($at: $crate::widths::Runs $(, $arg: $ty)*) $(-> $ret)? {
            #[inline(always)]
            fn body $(<$($g: $bound),*>)? ($($arg: $ty),*) $(-> $ret)? $body

            #[cfg(target_arch = "x86_64")]
            {
                #[target_feature(enable = "avx512f")]
                unsafe fn avx512 $(<$($g: $bound),*>)? ($($arg: $ty),*) $(-> $ret)? {
                    body::<$($($g),*)?>($($arg),*)
                }

                #[target_feature(enable = "avx2")]
                unsafe fn avx2 $(<$($g: $bound),*>)? ($($arg: $ty),*) $(-> $ret)? {
                    body::<$($($g),*)?>($($arg),*)
                }

                match $at.width() {
                    // SAFETY: a `Runs` names only a width this machine runs (its
                    // constructors check), here AVX-512F.
                    $crate::widths::Width::Avx512 => {
                        return unsafe { avx512::<$($($g),*)?>($($arg),*) }
                    }
                    // SAFETY: as above, here AVX2.
                    $crate::widths::Width::Avx2 => {
                        return unsafe { avx2::<$($($g),*)?>($($arg),*) }
                    }
                    $crate::widths::Width::Baseline => {}
                }
            }
            #[cfg(not(target_arch = "x86_64"))]
            let _ = $at;
            body::<$($($g),*)?>($($arg),*)
        }
    };
}
pub(crate) use at_widths;

#[cfg(test)]
mod tests {
    use super::*;

    at_widths! {
        /// The sum of squares, in a loop that vectorises.
        fn squares<T: Into<f64>>(at: Runs, xs: &[f32], scale: T) -> f64 {
            let s: f64 = scale.into();
            xs.iter().map(|&x| f64::from(x * x) * s).sum()
        }
    }

    #[test]
    fn runs_holds_only_widths_this_machine_runs() {
        let all = Runs::all();
        assert_eq!(all.first(), Some(&Runs(Width::Baseline)));
        assert_eq!(all.last(), Some(&Runs::best()));
        for w in [Width::Baseline, Width::Avx2, Width::Avx512] {
            assert_eq!(Runs::new(w).is_some(), w <= Width::best(), "{w:?}");
        }
        assert_eq!(
            Width::available(),
            all.iter().map(|r| r.width()).collect::<Vec<_>>()
        );
    }

    #[test]
    fn chosen_gives_back_what_was_set_and_starts_at_the_best() {
        let c = Chosen::new();
        assert_eq!(c.get(), Runs::best());
        for at in Runs::all() {
            c.set(at);
            assert_eq!(c.get(), at);
        }
    }

    #[test]
    fn every_width_runs_the_same_body() {
        let xs: Vec<f32> = (0..1000).map(|i| i as f32 * 0.37 - 100.0).collect();
        let want = squares::<f32>(Runs(Width::Baseline), &xs, 0.5);
        for at in Runs::all() {
            assert_eq!(squares(at, &xs, 0.5f32).to_bits(), want.to_bits(), "{at:?}");
        }
    }
}
