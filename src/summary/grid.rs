//! Evenly spaced grids.

/// `points` evenly spaced values from `from` to `to` inclusive (points ≥ 2).
pub fn linspace(from: f64, to: f64, points: usize) -> Vec<f64> {
    let step = (to - from) / (points - 1) as f64;
    (0..points)
        .map(|i| {
            if i + 1 == points {
                to
            } else {
                from + step * i as f64
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    #[test]
    fn ends_exactly() {
        let g = super::linspace(-1.0, 2.0, 4);
        assert_eq!(g, vec![-1.0, 0.0, 1.0, 2.0]);
    }
}
