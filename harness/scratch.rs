//! Column buffers reused from one segment of a check to the next.
//!
//! A streamed check ([`crate::gate::stream`]) builds the same columns for
//! every segment: the sweep's points, the argument and input columns, the
//! outputs, the reference's columns. Allocated afresh each time, they cost
//! more than filling them: the allocator hands freed memory back to the
//! system and every new column starts with page faults on zeroed pages (a
//! profile of the demo's 1M-point BRDF check put a quarter of its time in
//! the kernel's page-fault handler). Here each thread keeps the columns a
//! segment hands back and gives them to the next one.
//!
//! The pool is bounded: at most [`KEEP`] buffers of each element type per
//! thread, none longer than [`MAX_LEN`] elements, so it holds a few
//! segments' worth of memory whatever the check's size. A buffer taken here
//! and never handed back is simply freed; one handed back on another thread
//! joins that thread's pool.

use std::cell::RefCell;

/// Buffers kept per thread and element type.
pub const KEEP: usize = 96;
/// Longest buffer (in elements) worth keeping.
pub const MAX_LEN: usize = 1 << 14;

thread_local! {
    static F64: RefCell<Vec<Vec<f64>>> = const { RefCell::new(Vec::new()) };
    static U32: RefCell<Vec<Vec<u32>>> = const { RefCell::new(Vec::new()) };
}

/// An element type the pool keeps buffers of.
pub trait Pooled: Copy + 'static {
    /// What [`to_overwrite`] leaves in a kept buffer in debug builds.
    const POISON: Self;
    #[doc(hidden)]
    fn with_pool<R>(f: impl FnOnce(&mut Vec<Vec<Self>>) -> R) -> R;
}

impl Pooled for f64 {
    /// A NaN with a payload no arithmetic makes.
    const POISON: f64 = f64::from_bits(0x7ff4_dead_beef_0bad);
    fn with_pool<R>(f: impl FnOnce(&mut Vec<Vec<f64>>) -> R) -> R {
        F64.with_borrow_mut(f)
    }
}

impl Pooled for u32 {
    /// A signalling-NaN f32 pattern with a payload no arithmetic makes.
    const POISON: u32 = 0x7fa0_0bad;
    fn with_pool<R>(f: impl FnOnce(&mut Vec<Vec<u32>>) -> R) -> R {
        U32.with_borrow_mut(f)
    }
}

/// An empty column with room for `capacity` elements: a kept buffer when
/// one is large enough, else a new one.
pub fn column<T: Pooled>(capacity: usize) -> Vec<T> {
    let mut v = kept(capacity);
    v.clear();
    v
}

/// A kept buffer with room for `capacity` elements, as it was handed back,
/// else a new empty one.
fn kept<T: Pooled>(capacity: usize) -> Vec<T> {
    T::with_pool(|p| {
        let i = p.iter().rposition(|v| v.capacity() >= capacity)?;
        Some(p.swap_remove(i))
    })
    .unwrap_or_else(|| Vec::with_capacity(capacity))
}

/// A column of `len` elements for a caller that writes every one before
/// reading any: a kept buffer keeps the values it held (so none is
/// written twice), a new one or a shorter kept one is filled with `fill`
/// to `len`. In debug builds (the tests') a kept buffer holds
/// [`Pooled::POISON`] instead of its old values, so a caller that leaves a
/// value unwritten gives results that differ from a fresh buffer's, which
/// the tests that compare streamed checks with whole evaluations and
/// goldens see.
pub fn to_overwrite<T: Pooled>(len: usize, fill: T) -> Vec<T> {
    let mut v = kept(len);
    v.truncate(len);
    if cfg!(debug_assertions) {
        v.fill(T::POISON);
    }
    v.resize(len, fill);
    v
}

/// A column of `len` copies of `x`.
pub fn filled<T: Pooled>(len: usize, x: T) -> Vec<T> {
    let mut v = column(len);
    v.resize(len, x);
    v
}

/// Hand a column back for the next segment on this thread.
pub fn recycle<T: Pooled>(v: Vec<T>) {
    if v.capacity() == 0 || v.capacity() > MAX_LEN {
        return;
    }
    T::with_pool(|p| {
        if p.len() < KEEP {
            p.push(v);
        }
    });
}

/// Hand back every column of a list.
pub fn recycle_all<T: Pooled>(cols: impl IntoIterator<Item = Vec<T>>) {
    for c in cols {
        recycle(c);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_handed_back_buffer_is_reused_empty() {
        let mut v: Vec<f64> = column(1000);
        v.extend((0..1000).map(f64::from));
        let at = v.as_ptr();
        recycle(v);
        let w: Vec<f64> = column(500);
        assert!(w.is_empty());
        assert_eq!(w.as_ptr(), at, "the kept buffer comes back");
        // Too small for the request: a new buffer instead.
        recycle(w);
        let big: Vec<f64> = column(5000);
        assert!(big.capacity() >= 5000);
        assert_ne!(big.as_ptr(), at);
    }

    #[test]
    fn the_pool_is_bounded() {
        let huge: Vec<u32> = Vec::with_capacity(MAX_LEN + 1);
        recycle(huge);
        U32.with_borrow(|p| assert!(p.iter().all(|v| v.capacity() <= MAX_LEN)));
        for _ in 0..KEEP + 10 {
            recycle(Vec::<u32>::with_capacity(8));
        }
        U32.with_borrow(|p| assert_eq!(p.len(), KEEP));
        let f = filled(7, 3u32);
        assert_eq!(f, vec![3; 7]);
    }

    #[test]
    fn a_column_to_overwrite_keeps_what_it_held() {
        // What a kept buffer holds: its old values, or the poison in
        // debug builds.
        let old = |n: u32| -> Vec<u64> {
            (0..n)
                .map(|i| {
                    if cfg!(debug_assertions) {
                        f64::POISON
                    } else {
                        f64::from(i)
                    }
                    .to_bits()
                })
                .collect()
        };
        let bits = |v: &[f64]| -> Vec<u64> { v.iter().map(|x| x.to_bits()).collect() };
        let v: Vec<f64> = (0..100).map(f64::from).collect();
        let at = v.as_ptr();
        recycle(v);
        // Shorter: the kept values, cut to length.
        let w: Vec<f64> = to_overwrite(60, -1.0);
        assert_eq!(w.as_ptr(), at);
        assert_eq!(bits(&w), old(60));
        // Longer than it held (but within its room): the rest filled.
        recycle(w);
        let x: Vec<f64> = to_overwrite(80, -1.0);
        assert_eq!(x.as_ptr(), at);
        assert_eq!(bits(&x[..60]), old(60));
        assert!(x[60..].iter().all(|&e| e == -1.0));
        // Nothing kept large enough: a new buffer, filled.
        let y: Vec<f64> = to_overwrite(5000, 2.0);
        assert_eq!(y, vec![2.0; 5000]);
    }
}
