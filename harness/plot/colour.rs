//! Colour scales for error maps that read in grey and for colour-blind readers: lightness
//! rises monotonically from one end to the other, so the order of values survives a
//! grey-scale print and any loss of hue discrimination.
//!
//! The stops are the perceptually uniform sequential maps of van der Walt and Smith
//! (viridis, 2015, the SciPy conference talk "A Better Default Colormap for Matplotlib")
//! and Nuñez, Anderton and Renslow (cividis, 2018, PLOS ONE 13(7), "Optimizing colormaps
//! with consideration for color vision deficiency"), sampled at evenly spaced points and
//! written from memory; the unit tests check the property that matters (CIE L* rising
//! strictly along the scale), so a wrong stop would show there.

/// A sequential colour scale.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scale {
    Viridis,
    Cividis,
}

const VIRIDIS: [u32; 9] = [
    0x440154, 0x472d7b, 0x3b528b, 0x2c728e, 0x21908c, 0x27ad81, 0x5dc863, 0xaadc32, 0xfde725,
];

const CIVIDIS: [u32; 10] = [
    0x00204d, 0x00336f, 0x39486b, 0x575c6d, 0x707173, 0x8a8779, 0xa69d75, 0xc4b56c, 0xe4cf5b,
    0xffea46,
];

impl Scale {
    fn stops(self) -> &'static [u32] {
        match self {
            Scale::Viridis => &VIRIDIS,
            Scale::Cividis => &CIVIDIS,
        }
    }

    /// The colour at `t` in [0, 1] (clamped; NaN reads as 0), as sRGB bytes: linear
    /// interpolation between the stops. Rounding each channel to a byte on its own can
    /// make lightness dip by a few hundredths between close samples; of the byte
    /// colours around the interpolated one, the one whose lightness is nearest the
    /// stops' lightness interpolated the same way is taken, so lightness keeps rising.
    pub fn at(self, t: f64) -> (u8, u8, u8) {
        let stops = self.stops();
        let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
        let x = t * (stops.len() - 1) as f64;
        let k = (x.floor() as usize).min(stops.len() - 2);
        let f = x - k as f64;
        let (a, b) = (rgb(stops[k]), rgb(stops[k + 1]));
        let want = lightness(a) + f * (lightness(b) - lightness(a));
        let mix = |p: u8, q: u8| f64::from(p) + f * (f64::from(q) - f64::from(p));
        let (r, g, bl) = (mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2));
        let mut best = (a, f64::INFINITY);
        for m in 0..8 {
            let pick = |v: f64, bit: u32| {
                if m >> bit & 1 == 1 {
                    v.ceil() as u8
                } else {
                    v.floor() as u8
                }
            };
            let c = (pick(r, 0), pick(g, 1), pick(bl, 2));
            let d = (lightness(c) - want).abs();
            if d < best.1 {
                best = (c, d);
            }
        }
        best.0
    }

    /// The scale's name as readers know it.
    pub fn name(self) -> &'static str {
        match self {
            Scale::Viridis => "viridis",
            Scale::Cividis => "cividis",
        }
    }
}

fn rgb(c: u32) -> (u8, u8, u8) {
    ((c >> 16) as u8, (c >> 8) as u8, c as u8)
}

/// CIE 1976 L* (0 black … 100 white) of an sRGB colour: the sRGB transfer function of
/// IEC 61966-2-1 to linear light, relative luminance Y with the sRGB (D65) weights
/// 0.2126, 0.7152, 0.0722, then L* = 116 f(Y) − 16 with the CIE's cube-root f.
pub fn lightness((r, g, b): (u8, u8, u8)) -> f64 {
    let lin = |c: u8| {
        let c = f64::from(c) / 255.0;
        if c <= 0.04045 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    };
    let y = 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
    let f = if y > (6.0f64 / 29.0).powi(3) {
        y.cbrt()
    } else {
        y / (3.0 * (6.0f64 / 29.0).powi(2)) + 4.0 / 29.0
    };
    116.0 * f - 16.0
}

/// The colour of a dark or light mark that stands out on `c`.
pub fn contrast(c: (u8, u8, u8)) -> (u8, u8, u8) {
    if lightness(c) > 55.0 {
        (0, 0, 0)
    } else {
        (255, 255, 255)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lightness_of_black_grey_and_white() {
        // CIE L* of sRGB black and white are 0 and 100 by definition; sRGB mid-grey
        // (119, 119, 119) has L* ≈ 50 (a handbook fact of the sRGB/CIELAB definitions).
        assert!(lightness((0, 0, 0)).abs() < 1e-9);
        assert!((lightness((255, 255, 255)) - 100.0).abs() < 1e-9);
        assert!((lightness((119, 119, 119)) - 50.0).abs() < 0.5);
    }

    #[test]
    fn both_scales_rise_in_lightness_everywhere() {
        for scale in [Scale::Viridis, Scale::Cividis] {
            let l: Vec<f64> = (0..=256)
                .map(|i| lightness(scale.at(f64::from(i) / 256.0)))
                .collect();
            for w in l.windows(2) {
                assert!(
                    w[1] >= w[0],
                    "{}: lightness falls {} → {}",
                    scale.name(),
                    w[0],
                    w[1]
                );
            }
            // From dark to light over most of the range: reads in grey.
            assert!(
                l[256] - l[0] > 60.0,
                "{}: range {} → {}",
                scale.name(),
                l[0],
                l[256]
            );
        }
    }

    #[test]
    fn stops_rise_strictly() {
        for scale in [Scale::Viridis, Scale::Cividis] {
            let l: Vec<f64> = scale.stops().iter().map(|&c| lightness(rgb(c))).collect();
            assert!(
                l.windows(2).all(|w| w[1] > w[0] + 3.0),
                "{}: {l:?}",
                scale.name()
            );
        }
    }

    #[test]
    fn marks_contrast_with_the_scale() {
        for t in [0.0, 0.5, 1.0] {
            let c = Scale::Viridis.at(t);
            assert!((lightness(c) - lightness(contrast(c))).abs() > 40.0);
        }
    }
}
