//! The text forms of values. Values typed by a person (the CLI's `--point` and input CSV
//! files) read into lane bit patterns, and lane bit patterns written back as text
//! ([`parse_value`], [`format_value`]); and the exact form golden files use
//! ([`format_exact`], [`parse_exact`]), which keeps NaN payloads.
//!
//! - Floats are rounded from the decimal text to their type **once**: an f32 is read
//!   with the correctly rounded decimal-to-f32 conversion, never through f64 (two
//!   roundings, decimal → f64 → f32, can land on the wrong neighbour when the f64 lies
//!   exactly half-way between two f32 values). An f16 is read through f64 and, in the one
//!   case where that can go wrong — the f64 is exactly half-way between two f16 values —
//!   the decimal text itself is compared with that half-way point.
//! - Integers are read strictly: a fraction or a value outside the type's range is an
//!   error, never a saturating cast.
//! - Any scalar can be given as its bit pattern, `0x3f800000` (f32 1.0), `0x3c00` (f16 1.0),
//!   for exact work; [`format_value`] writes that form back when asked.

use super::ScalarKind;

/// Read `text` as a value of `kind`, returning its lane bit pattern (the evaluator's
/// column encoding). The error says what is wrong, without a location: the caller adds it.
pub fn parse_value(kind: ScalarKind, text: &str) -> Result<u32, String> {
    let t = text.trim();
    if let Some(hex) = t.strip_prefix("0x").or_else(|| t.strip_prefix("0X")) {
        return parse_bits(kind, hex, t);
    }
    match kind {
        ScalarKind::Bool => match t {
            "true" | "1" => Ok(1),
            "false" | "0" => Ok(0),
            _ => Err(format!("`{t}` is not a bool (true or false)")),
        },
        ScalarKind::I32 => {
            let v = parse_integer(t)?;
            i32::try_from(v).map(|v| v as u32).map_err(|_| {
                format!(
                    "`{t}` is out of range for i32 ({} to {})",
                    i32::MIN,
                    i32::MAX
                )
            })
        }
        ScalarKind::U32 => {
            let v = parse_integer(t)?;
            u32::try_from(v)
                .map_err(|_| format!("`{t}` is out of range for u32 (0 to {})", u32::MAX))
        }
        ScalarKind::F32 => parse_f32(t).map(f32::to_bits),
        ScalarKind::F16 => parse_f16(t).map(|h| u32::from(h.to_bits())),
    }
}

/// Write a lane bit pattern of `kind` as text: the shortest decimal that reads back to
/// the same value, or with `bits` the bit pattern (`0x3f800000`; integers and bools stay
/// decimal).
pub fn format_value(kind: ScalarKind, bits: u32, as_bits: bool) -> String {
    match kind {
        ScalarKind::F32 if as_bits => format!("0x{bits:08x}"),
        ScalarKind::F16 if as_bits => format!("0x{:04x}", bits as u16),
        ScalarKind::F32 => format!("{:?}", f32::from_bits(bits)),
        ScalarKind::F16 => format!("{:?}", half::f16::from_bits(bits as u16).to_f32()),
        ScalarKind::I32 => (bits as i32).to_string(),
        ScalarKind::U32 => bits.to_string(),
        ScalarKind::Bool => (bits != 0).to_string(),
    }
}

/// The exact text form of golden files: a float as the shortest decimal that reads back to
/// the same value, a NaN other than the canonical one as `nan:` and its bit pattern (f32
/// `nan:0x7fc00001`, f16 `nan:0x7e01`), integers and bools in decimal. [`parse_exact`]
/// reads it back to the same bits.
pub fn format_exact(k: ScalarKind, bits: u32) -> String {
    match k {
        ScalarKind::F32 => {
            let x = f32::from_bits(bits);
            if x.is_nan() && bits != f32::NAN.to_bits() {
                format!("nan:{bits:#010x}")
            } else {
                format!("{x:?}")
            }
        }
        ScalarKind::F16 => {
            let h = half::f16::from_bits(bits as u16);
            if h.is_nan() && h.to_bits() != half::f16::NAN.to_bits() {
                format!("nan:{:#06x}", bits as u16)
            } else {
                format!("{:?}", h.to_f32())
            }
        }
        ScalarKind::I32 => (bits as i32).to_string(),
        ScalarKind::U32 => bits.to_string(),
        ScalarKind::Bool => (bits != 0).to_string(),
    }
}

/// Read the exact text form ([`format_exact`]) of a value of kind `k` back to its bits.
pub fn parse_exact(k: ScalarKind, s: &str) -> Result<u32, String> {
    let bad = || format!("`{s}` is not a valid {} value", k.wgsl());
    if let Some(hex) = s.strip_prefix("nan:0x") {
        // Only a NaN of the column's own width is written this way; anything
        // else would not read back as what `render` writes.
        let b = u32::from_str_radix(hex, 16).map_err(|_| bad())?;
        let nan = match k {
            ScalarKind::F32 => f32::from_bits(b).is_nan(),
            ScalarKind::F16 => b <= 0xffff && half::f16::from_bits(b as u16).is_nan(),
            _ => false,
        };
        return if nan { Ok(b) } else { Err(bad()) };
    }
    Ok(match k {
        ScalarKind::F32 => s.parse::<f32>().map_err(|_| bad())?.to_bits(),
        ScalarKind::F16 => {
            u32::from(half::f16::from_f32(s.parse::<f32>().map_err(|_| bad())?).to_bits())
        }
        ScalarKind::I32 => s.parse::<i32>().map_err(|_| bad())? as u32,
        ScalarKind::U32 => s.parse::<u32>().map_err(|_| bad())?,
        ScalarKind::Bool => match s {
            "true" => 1,
            "false" => 0,
            _ => return Err(bad()),
        },
    })
}

fn parse_bits(kind: ScalarKind, hex: &str, whole: &str) -> Result<u32, String> {
    let digits = match kind {
        ScalarKind::F16 => 4,
        _ => 8,
    };
    if hex.is_empty() || hex.len() > digits || !hex.chars().all(|c| c.is_ascii_hexdigit()) {
        return Err(format!(
            "`{whole}` is not a {} bit pattern (0x and up to {digits} hex digits)",
            kind.wgsl()
        ));
    }
    let v = u32::from_str_radix(hex, 16).expect("checked hex digits");
    match kind {
        ScalarKind::Bool if v > 1 => Err(format!("`{whole}` is not a bool (0x0 or 0x1)")),
        _ => Ok(v),
    }
}

/// An integer written in decimal (an optional sign, digits, and a fraction or exponent
/// only if it leaves a whole number: `3.0` and `1e3` are integers, `2.5` is not).
fn parse_integer(t: &str) -> Result<i128, String> {
    if let Ok(v) = t.parse::<i128>() {
        return Ok(v);
    }
    let Some(d) = Decimal::parse(t) else {
        return Err(format!("`{t}` is not an integer"));
    };
    // A whole number: no significant digit after the point.
    let frac_digits = -d.exp;
    if frac_digits > 0 {
        let keep = d.digits.len() as i64 - frac_digits;
        if keep < 0 || d.digits[keep.max(0) as usize..].iter().any(|&c| c != 0) {
            return Err(format!("`{t}` is not an integer (it has a fraction)"));
        }
    }
    let too_big = || format!("`{t}` is out of range");
    let mut v: i128 = 0;
    let whole_len = (d.digits.len() as i64 + d.exp.min(0)).max(0) as usize;
    for &c in &d.digits[..whole_len] {
        v = v
            .checked_mul(10)
            .and_then(|v| v.checked_add(i128::from(c)))
            .ok_or_else(too_big)?;
    }
    for _ in 0..d.exp.max(0) {
        v = v.checked_mul(10).ok_or_else(too_big)?;
    }
    Ok(if d.negative { -v } else { v })
}

fn parse_f32(t: &str) -> Result<f32, String> {
    match t {
        "nan" | "NaN" => return Ok(f32::NAN),
        "inf" | "+inf" => return Ok(f32::INFINITY),
        "-inf" => return Ok(f32::NEG_INFINITY),
        _ => {}
    }
    // Rust's decimal-to-f32 conversion rounds the exact decimal value once.
    t.parse::<f32>()
        .ok()
        .filter(|_| Decimal::parse(t).is_some())
        .ok_or_else(|| format!("`{t}` is not a number"))
}

fn parse_f16(t: &str) -> Result<half::f16, String> {
    use half::f16;
    let d = match t {
        "nan" | "NaN" => return Ok(f16::NAN),
        "inf" | "+inf" => return Ok(f16::INFINITY),
        "-inf" => return Ok(f16::NEG_INFINITY),
        _ => Decimal::parse(t).ok_or_else(|| format!("`{t}` is not a number"))?,
    };
    let x: f64 = t.parse().map_err(|_| format!("`{t}` is not a number"))?;
    let h = f16::from_f64(x);
    // The f64 is exact for every f16 value and every half-way point between two, so
    // f16::from_f64 (one rounding of x) is wrong only when x is exactly such a half-way
    // point while the decimal is not: then the decimal's side of x decides.
    if !h.is_finite() || h.to_f64() == x {
        return Ok(h);
    }
    let (lo, hi) = if h.to_f64() < x {
        (h, next_up(h))
    } else {
        (next_down(h), h)
    };
    let mid = (lo.to_f64() + hi.to_f64()) / 2.0;
    if mid != x || !hi.is_finite() {
        return Ok(h);
    }
    Ok(match d.cmp_exact(x) {
        std::cmp::Ordering::Less => lo,
        std::cmp::Ordering::Greater => hi,
        std::cmp::Ordering::Equal => h,
    })
}

fn next_up(h: half::f16) -> half::f16 {
    let b = h.to_bits();
    half::f16::from_bits(if b & 0x8000 == 0 {
        b + 1
    } else if b == 0x8000 {
        1
    } else {
        b - 1
    })
}

fn next_down(h: half::f16) -> half::f16 {
    let b = h.to_bits();
    half::f16::from_bits(if b & 0x8000 != 0 {
        b + 1
    } else if b == 0 {
        0x8001
    } else {
        b - 1
    })
}

/// A decimal number as written: sign, significant digits, and the power of ten of the
/// last digit (value = ± digits × 10^exp).
struct Decimal {
    negative: bool,
    digits: Vec<u8>,
    exp: i64,
}

impl Decimal {
    fn parse(t: &str) -> Option<Decimal> {
        let (negative, rest) = match t.as_bytes().first()? {
            b'-' => (true, &t[1..]),
            b'+' => (false, &t[1..]),
            _ => (false, t),
        };
        let (mantissa, exp) = match rest.find(['e', 'E']) {
            Some(i) => (&rest[..i], rest[i + 1..].parse::<i64>().ok()?),
            None => (rest, 0),
        };
        let (int, frac) = mantissa.split_once('.').unwrap_or((mantissa, ""));
        if int.is_empty() && frac.is_empty() {
            return None;
        }
        if !int.bytes().chain(frac.bytes()).all(|c| c.is_ascii_digit()) {
            return None;
        }
        let digits: Vec<u8> = int.bytes().chain(frac.bytes()).map(|c| c - b'0').collect();
        Some(Decimal {
            negative,
            digits,
            exp: exp.checked_sub(frac.len() as i64)?,
        })
    }

    /// Compare the exact decimal value with the exact value of a finite f64.
    fn cmp_exact(&self, x: f64) -> std::cmp::Ordering {
        // Every finite f64 has a finite decimal expansion; 1100 places after the point
        // hold the smallest subnormal's exactly, and Rust's fixed-point formatting is
        // exact.
        let exact = format!("{:.1100}", x.abs());
        let other = Decimal::parse(&exact).expect("formatted f64 parses");
        let (a, b) = (self.magnitude(), other.magnitude());
        let ord = a.cmp(&b);
        match (self.negative && !self.is_zero(), x < 0.0) {
            (false, false) => ord,
            (true, true) => ord.reverse(),
            (false, true) => std::cmp::Ordering::Greater,
            (true, false) => std::cmp::Ordering::Less,
        }
    }

    fn is_zero(&self) -> bool {
        self.digits.iter().all(|&d| d == 0)
    }

    /// Digits aligned to a common exponent, leading and trailing zeros trimmed, as a
    /// comparable key: (position of the leading digit, digits).
    fn magnitude(&self) -> (i64, Vec<u8>) {
        let first = self.digits.iter().position(|&d| d != 0);
        let Some(first) = first else {
            return (i64::MIN, Vec::new());
        };
        let mut digits = self.digits[first..].to_vec();
        let lead = digits.len() as i64 + self.exp;
        while digits.last() == Some(&0) {
            digits.pop();
        }
        (lead, digits)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn f32_rounds_once_where_two_roundings_differ() {
        // 1 + 2^-24 (= 1.000000059604644775390625, exact) is half-way between the f32
        // values 1 and 1 + 2^-23. This decimal lies 1e-20 above it: through f64 it rounds
        // to exactly the half-way point (f64 spacing there is 2^-52, about 2.2e-16), and
        // then ties-to-even gives 1; rounded once it is 1 + 2^-23.
        let text = "1.00000005960464477539062500001";
        assert_eq!(
            (text.parse::<f64>().unwrap() as f32).to_bits(),
            1f32.to_bits()
        );
        assert_eq!(
            parse_value(ScalarKind::F32, text).unwrap(),
            (1.0f32 + f32::EPSILON).to_bits()
        );
    }

    #[test]
    fn f16_rounds_once_at_a_half_way_point() {
        // 1 + 2^-11 is half-way between the f16 values 1 and 1 + 2^-10; a decimal a hair
        // above it belongs to the upper one, a hair below to the lower one, exactly on it
        // to the even one (1).
        let one = u32::from(half::f16::ONE.to_bits());
        assert_eq!(parse_value(ScalarKind::F16, "1.00048828125").unwrap(), one);
        assert_eq!(
            parse_value(ScalarKind::F16, "1.00048828125000000000001").unwrap(),
            one + 1
        );
        assert_eq!(
            parse_value(ScalarKind::F16, "1.00048828124999999999999").unwrap(),
            one
        );
        assert_eq!(
            parse_value(ScalarKind::F16, "-1.00048828125000000000001").unwrap(),
            u32::from((-half::f16::ONE).to_bits()) + 1
        );
    }

    #[test]
    fn integers_are_strict() {
        assert_eq!(parse_value(ScalarKind::I32, "-7").unwrap(), (-7i32) as u32);
        assert_eq!(parse_value(ScalarKind::I32, "3.0").unwrap(), 3);
        assert_eq!(parse_value(ScalarKind::U32, "1e3").unwrap(), 1000);
        assert_eq!(
            parse_value(ScalarKind::U32, "4294967295").unwrap(),
            u32::MAX
        );
        for (k, t, says) in [
            (ScalarKind::I32, "2.5", "fraction"),
            (ScalarKind::I32, "2147483648", "out of range"),
            (ScalarKind::I32, "-2147483649", "out of range"),
            (ScalarKind::U32, "-1", "out of range"),
            (ScalarKind::U32, "4294967296", "out of range"),
            (ScalarKind::U32, "1e40", "out of range"),
            (ScalarKind::U32, "abc", "not an integer"),
            (ScalarKind::Bool, "2", "not a bool"),
        ] {
            let e = parse_value(k, t).unwrap_err();
            assert!(e.contains(says), "{t}: {e}");
        }
    }

    #[test]
    fn bit_patterns_in_and_out() {
        assert_eq!(
            parse_value(ScalarKind::F32, "0x3f800000").unwrap(),
            0x3f80_0000
        );
        assert_eq!(parse_value(ScalarKind::F16, "0x3c00").unwrap(), 0x3c00);
        assert!(parse_value(ScalarKind::F16, "0x3f800000").is_err());
        assert!(parse_value(ScalarKind::F32, "0xg").is_err());
        assert_eq!(
            format_value(ScalarKind::F32, 0x3f80_0000, true),
            "0x3f800000"
        );
        assert_eq!(format_value(ScalarKind::F16, 0x3c00, true), "0x3c00");
        assert_eq!(format_value(ScalarKind::F32, 0x3f80_0000, false), "1.0");
        // -0.0 and a NaN payload survive the round trip only as bits.
        for bits in [0x8000_0000u32, 0x7fc0_0001] {
            let text = format_value(ScalarKind::F32, bits, true);
            assert_eq!(parse_value(ScalarKind::F32, &text).unwrap(), bits);
        }
    }

    #[test]
    fn not_numbers_are_refused() {
        for t in ["", "1.2.3", "--1", "1e", "x1", "infinity"] {
            assert!(parse_value(ScalarKind::F32, t).is_err(), "{t}");
        }
    }
}
