//! The `[shape]` section: regions of interest and the thresholds of the shape summaries
//! (see [`crate::summary::ShapeSpec`] and docs/model.md, "Bumps, dips and regions").

use serde::{Deserialize, Serialize};

use crate::summary::{Region, ShapeSpec, DEFAULT_DIP_RATIO, DEFAULT_REGION_MASS};

/// `[shape]` as written.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ShapeSection {
    /// Intervals `[from, to]` of the measurement (data scale) to ask about.
    pub regions: Option<Vec<Vec<f64>>>,
    /// A dip is visible when its density is below this fraction of the lower peak.
    pub dip_ratio: Option<f64>,
    /// The mass a region is asked to hold more than.
    pub region_mass: Option<f64>,
}

/// Checks `[shape]`; an error names the key and says what is wrong.
pub fn resolve_shape(s: Option<&ShapeSection>) -> Result<ShapeSpec, (&'static str, String)> {
    let s = s.cloned().unwrap_or_default();
    let dip_ratio = s.dip_ratio.unwrap_or(DEFAULT_DIP_RATIO);
    if !(dip_ratio > 0.0 && dip_ratio < 1.0) {
        return Err((
            "dip_ratio",
            format!("must be strictly between 0 and 1, got {dip_ratio}"),
        ));
    }
    let region_mass = s.region_mass.unwrap_or(DEFAULT_REGION_MASS);
    if !(0.0..1.0).contains(&region_mass) {
        return Err((
            "region_mass",
            format!("must be at least 0 and below 1, got {region_mass}"),
        ));
    }
    let mut regions = Vec::new();
    for (i, r) in s.regions.unwrap_or_default().iter().enumerate() {
        let n = i + 1;
        let &[from, to] = r.as_slice() else {
            return Err((
                "regions",
                format!(
                    "entry {n} must be a pair [from, to], got {} numbers",
                    r.len()
                ),
            ));
        };
        if !(from.is_finite() && to.is_finite() && from < to) {
            return Err((
                "regions",
                format!("entry {n} is [{from}, {to}]; each entry needs finite ends with from < to"),
            ));
        }
        regions.push(Region { from, to });
    }
    Ok(ShapeSpec {
        regions,
        dip_ratio,
        region_mass,
    })
}

/// The resolved settings as written into RUN/config.toml.
pub fn shape_section(s: &ShapeSpec) -> ShapeSection {
    ShapeSection {
        regions: Some(s.regions.iter().map(|r| vec![r.from, r.to]).collect()),
        dip_ratio: Some(s.dip_ratio),
        region_mass: Some(s.region_mass),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bad_values_name_their_key() {
        let bad = |s: ShapeSection| resolve_shape(Some(&s)).unwrap_err();
        let e = bad(ShapeSection {
            dip_ratio: Some(1.0),
            ..Default::default()
        });
        assert_eq!(e.0, "dip_ratio");
        let e = bad(ShapeSection {
            regions: Some(vec![vec![1.0, 2.0], vec![5.0, 3.0]]),
            ..Default::default()
        });
        assert!(e.0 == "regions" && e.1.contains("entry 2"), "{e:?}");
        let e = bad(ShapeSection {
            regions: Some(vec![vec![1.0]]),
            ..Default::default()
        });
        assert!(e.1.contains("pair"), "{e:?}");
        assert_eq!(resolve_shape(None).unwrap(), ShapeSpec::default());
    }
}
