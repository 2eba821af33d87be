//! A property check's result against one sweep parameter, as a [`LineChart`]: for
//! example the directional albedo of a BRDF (its integral over the light hemisphere)
//! against the view angle, one curve per roughness, beside what the property expects:
//! a hemisphere property's bound of 1 as one dashed line; for the others, a curve's
//! expected values dashed in its colour where they differ from its result.

use std::collections::BTreeMap;

use super::{Axis, LineChart, Series};
use crate::gate::oracle::Sides;
use crate::suite::{Check, Property};
use crate::sweep::{fmt_num, Points};

/// Most curves (values of the second parameter) drawn; more are thinned evenly.
pub const MAX_CURVES: usize = 4;

/// The chart of a property check's first output over parameter `x` (default: the
/// first sweep parameter with more than one value), one curve pair per value of the
/// next such parameter (at most [`MAX_CURVES`], evenly picked). Every other parameter
/// is reduced by the worst case: of the points that share a curve and an x value, the
/// one farthest from what the property expects is drawn, so a violation anywhere shows.
pub fn property_chart(
    check: &Check,
    points: &Points,
    sides: &Sides,
    x: Option<&str>,
) -> Result<LineChart, String> {
    let varying: Vec<&str> = check
        .sweep
        .params
        .iter()
        // More than one bin is more than one distinct value (Axis::of counts them).
        .filter(|(n, _)| Axis::of(&check.sweep, n).is_ok_and(|a| a.bins > 1))
        .map(|(n, _)| n.as_str())
        .collect();
    let x_name = match x {
        Some(n) => n,
        None => varying.first().copied().ok_or_else(|| {
            format!(
                "check `{}`: no sweep parameter takes more than one value, so there is nothing to draw a curve over",
                check.name
            )
        })?,
    };
    let x_axis = Axis::of(&check.sweep, x_name)?;
    let curve_axis = match varying.iter().find(|n| **n != x_name) {
        Some(n) => Some(Axis::of(&check.sweep, n)?),
        None => None,
    };
    let (got, want) = match (sides.got.first(), sides.want.first()) {
        (Some(g), Some(w)) => (g, w),
        _ => {
            return Err(format!(
                "check `{}`: the property has no output",
                check.name
            ))
        }
    };
    // curve value → x value → (distance, got, want) of the worst point so far.
    let mut curves: BTreeMap<Key, BTreeMap<Key, (f64, f64, f64)>> = BTreeMap::new();
    for i in 0..points.len {
        let c = curve_axis.as_ref().map_or(0.0, |a| a.value(points, i));
        let xv = x_axis.value(points, i);
        let d = (got[i] - want[i]).abs();
        // NaN is the worst there is.
        let d = if d.is_nan() { f64::INFINITY } else { d };
        let slot = curves.entry(Key(c)).or_default().entry(Key(xv)).or_insert((
            f64::NEG_INFINITY,
            f64::NAN,
            f64::NAN,
        ));
        if d > slot.0 {
            *slot = (d, got[i], want[i]);
        }
    }
    let keys: Vec<Key> = curves.keys().copied().collect();
    let picked: Vec<Key> = if keys.len() <= MAX_CURVES {
        keys
    } else {
        (0..MAX_CURVES)
            .map(|k| keys[k * (keys.len() - 1) / (MAX_CURVES - 1)])
            .collect()
    };
    let mut series = Vec::new();
    // A hemisphere property's bound (albedo <= 1, or a normalisation = 1) is one
    // dashed line; elsewhere a curve's expected values are drawn where they differ
    // from it (a range's bound where the result leaves the range, say).
    let bound = match check.property.as_ref().map(|p| &p.property) {
        Some(Property::Hemisphere {
            equal,
            masking: None,
            ..
        }) => Some(*equal),
        _ => None,
    };
    if let Some(equal) = bound {
        let (lo, hi) = (x_axis.lo, x_axis.hi);
        series.push(Series {
            name: if equal {
                "1 (normalised)"
            } else {
                "1 (energy conserved)"
            }
            .to_string(),
            points: vec![(lo, 1.0), (hi, 1.0)],
            dashed: true,
        });
    }
    for key in picked {
        let line = &curves[&key];
        let tag = match &curve_axis {
            Some(a) if a.theta => format!(", θ of {} = {}°", a.name, fmt_num(key.0)),
            Some(a) => format!(", {} = {}", a.name, fmt_num(key.0)),
            None => String::new(),
        };
        series.push(Series {
            name: format!("{}{tag}", curve_name(check)),
            points: line.iter().map(|(x, v)| (x.0, v.1)).collect(),
            dashed: false,
        });
        let differs = line.values().any(|v| v.1.to_bits() != v.2.to_bits());
        if bound.is_none() && differs {
            series.push(Series {
                name: format!("expected{tag}"),
                points: line.iter().map(|(x, v)| (x.0, v.2)).collect(),
                dashed: true,
            });
        }
    }
    Ok(LineChart {
        title: format!("{}: {}", check.name, sides.against),
        x_label: x_axis.label.clone(),
        y_label: y_label(check),
        series,
    })
}

/// What the curves show: the integral for a hemisphere property, else the result.
fn y_label(check: &Check) -> String {
    match check.property.as_ref().map(|p| &p.property) {
        Some(Property::Hemisphere { over, .. }) => {
            format!("∫ {} cos θ d{over} (directional albedo)", check.function)
        }
        _ => format!("{} (first output)", check.function),
    }
}

fn curve_name(check: &Check) -> String {
    match check.property.as_ref().map(|p| &p.property) {
        Some(Property::Hemisphere { equal: false, .. }) => "albedo".to_string(),
        Some(Property::Hemisphere { equal: true, .. }) => "integral".to_string(),
        _ => check.function.clone(),
    }
}

/// An f64 ordered by `total_cmp`, as a map key.
#[derive(Clone, Copy, Debug)]
struct Key(f64);

impl PartialEq for Key {
    fn eq(&self, o: &Key) -> bool {
        self.0.total_cmp(&o.0).is_eq()
    }
}
impl Eq for Key {}
impl PartialOrd for Key {
    fn partial_cmp(&self, o: &Key) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Key {
    fn cmp(&self, o: &Key) -> std::cmp::Ordering {
        self.0.total_cmp(&o.0)
    }
}
