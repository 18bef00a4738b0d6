//! Matching the bumps of every draw to a few bumps of the posterior, and summarising each
//! bump (existence probability, location, height, prominence) and each dip between
//! neighbouring bumps (location, depth ratio, probability of a visible dip).
//!
//! The rule works on densities only, so it cannot see component labels (label switching
//! leaves it unchanged). The bumps of the posterior are the modes of the posterior mean
//! density on the grid, by the rule of [`super::modes`]. Between two neighbouring ones the
//! axis is split at the grid point where the posterior mean is lowest (the first such point
//! if several); each bump owns the stretch between its splits (the outermost stretches run
//! to ±∞). A draw has bump j when at least one of its modes lies in stretch j; if several
//! do, the highest stands for it. The dip between bumps j and j + 1 of a draw that has
//! both is the lowest point of its density between the two modes standing for them, and
//! its depth ratio is the density there over the lower of the two peaks (1 would be no dip
//! at all). Limits: a bump that the posterior mean smooths away (present in some draws but
//! at scattered places) is not reported on its own; its draws' modes count towards the
//! neighbouring stretch, which may then hold two modes of one draw.

use serde::Serialize;

use super::bumps::DrawBump;
use super::features::DrawFeatures;
use super::functionals::Posterior;
use super::modes::peaks;

/// One bump of the posterior.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BumpSummary {
    /// The mode of the posterior mean density that defines the bump (a grid point).
    pub reference: f64,
    /// The stretch of the axis the bump owns; `None`: unbounded on that side.
    pub from: Option<f64>,
    pub to: Option<f64>,
    /// Share of draws with a mode in the stretch.
    pub probability: f64,
    /// Location, height and prominence over the draws that have the bump (`None` when no
    /// draw has it).
    pub location: Option<Posterior>,
    pub height: Option<Posterior>,
    pub prominence: Option<Posterior>,
}

/// The dip between two neighbouring bumps of the posterior.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DipSummary {
    /// The bumps on either side, numbered from 1 in the order of `bumps`.
    pub between: [usize; 2],
    /// Share of draws that have both bumps.
    pub probability_both: f64,
    /// Location of the lowest point and its depth ratio, over the draws with both bumps.
    pub location: Option<Posterior>,
    pub ratio: Option<Posterior>,
    /// The visible-dip ratio (`[shape] dip_ratio`).
    pub visible_below: f64,
    /// Share of all draws that have both bumps with a depth ratio below `visible_below`.
    pub probability_visible: f64,
}

/// The bumps of the posterior and their dips, from the draws' bumps in `f` and the
/// posterior mean density `mean` on `grid`.
pub fn match_bumps(
    f: &DrawFeatures,
    grid: &[f64],
    mean: &[f64],
    levels: &[f64],
) -> (Vec<BumpSummary>, Vec<DipSummary>) {
    let refs = peaks(mean);
    if refs.is_empty() {
        return (Vec::new(), Vec::new());
    }
    let m = refs.len();
    // Split points: the first lowest grid point of the mean between neighbouring peaks.
    let splits: Vec<f64> = refs
        .windows(2)
        .map(|w| {
            let mut j = w[0].last + 1;
            for i in w[0].last + 1..w[1].first {
                if mean[i] < mean[j] {
                    j = i;
                }
            }
            grid[j]
        })
        .collect();
    let n = f.len();
    let mut loc = vec![Vec::new(); m];
    let mut height = vec![Vec::new(); m];
    let mut prom = vec![Vec::new(); m];
    let mut dip_loc = vec![Vec::new(); m - 1];
    let mut dip_ratio = vec![Vec::new(); m - 1];
    let mut visible = vec![0usize; m - 1];
    let ratio_limit = f.shape.dip_ratio;
    let mut stand: Vec<Option<usize>> = vec![None; m];
    for d in 0..n {
        let bumps = f.bumps_of(d);
        assign(bumps, &splits, &mut stand);
        for j in 0..m {
            if let Some(i) = stand[j] {
                loc[j].push(bumps[i].location);
                height[j].push(bumps[i].height);
                prom[j].push(bumps[i].prominence);
            }
        }
        for j in 0..m - 1 {
            if let (Some(a), Some(b)) = (stand[j], stand[j + 1]) {
                let (x, h) = lowest_between(bumps, a, b);
                let r = h / bumps[a].height.min(bumps[b].height);
                dip_loc[j].push(x);
                dip_ratio[j].push(r);
                if r < ratio_limit {
                    visible[j] += 1;
                }
            }
        }
    }
    let share = |k: usize| k as f64 / n.max(1) as f64;
    let post = |v: &Vec<f64>| (!v.is_empty()).then(|| Posterior::of(v, levels));
    let summaries = (0..m)
        .map(|j| {
            let p = refs[j];
            BumpSummary {
                reference: grid[(p.first + p.last) / 2],
                from: (j > 0).then(|| splits[j - 1]),
                to: (j + 1 < m).then(|| splits[j]),
                probability: share(loc[j].len()),
                location: post(&loc[j]),
                height: post(&height[j]),
                prominence: post(&prom[j]),
            }
        })
        .collect();
    let dips = (0..m - 1)
        .map(|j| DipSummary {
            between: [j + 1, j + 2],
            probability_both: share(dip_loc[j].len()),
            location: post(&dip_loc[j]),
            ratio: post(&dip_ratio[j]),
            visible_below: ratio_limit,
            probability_visible: share(visible[j]),
        })
        .collect();
    (summaries, dips)
}

/// For each stretch (split at `splits`, ascending), the index in `bumps` of the highest
/// bump inside it, if any.
pub fn assign(bumps: &[DrawBump], splits: &[f64], stand: &mut [Option<usize>]) {
    stand.iter_mut().for_each(|s| *s = None);
    for (i, b) in bumps.iter().enumerate() {
        // Stretch j holds (splits[j-1], splits[j]]: the number of splits below x.
        let j = splits.partition_point(|&s| s < b.location);
        match stand[j] {
            Some(k) if bumps[k].height >= b.height => {}
            _ => stand[j] = Some(i),
        }
    }
}

/// The lowest point of a draw's density between its bumps `a` < `b`: the lowest of the
/// dips recorded between consecutive bumps a..=b.
fn lowest_between(bumps: &[DrawBump], a: usize, b: usize) -> (f64, f64) {
    let mut best = (bumps[a + 1].dip_location, bumps[a + 1].dip_height);
    for bump in &bumps[a + 2..=b] {
        if bump.dip_height < best.1 {
            best = (bump.dip_location, bump.dip_height);
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bump(location: f64, height: f64, dip: (f64, f64)) -> DrawBump {
        DrawBump {
            location,
            height,
            prominence: height,
            dip_location: dip.0,
            dip_height: dip.1,
        }
    }

    /// Features of hand-made draws (only their bumps matter here).
    fn features(draws: &[Vec<DrawBump>], dip_ratio: f64) -> DrawFeatures {
        let mut f = DrawFeatures::new(&[]);
        f.shape.dip_ratio = dip_ratio;
        for d in draws {
            f.mean.push(0.0);
            f.bumps.extend(d.iter().copied());
            f.bump_end.push(f.bumps.len());
        }
        f
    }

    #[test]
    fn draws_are_matched_by_stretch_and_dips_span_intermediate_modes() {
        // Posterior mean with modes at x = 2 and x = 7 and its lowest point between them at
        // x = 5: stretches (−∞, 5] and (5, ∞). Worked by hand (common practice, no source).
        let grid: Vec<f64> = (0..11).map(|i| i as f64).collect();
        let mean = [0.0, 1.0, 3.0, 2.0, 1.5, 1.0, 1.8, 2.5, 1.0, 0.5, 0.0];
        let draws = vec![
            // Both bumps; dip ratio 0.5 / 2 = 0.25.
            vec![bump(2.1, 3.0, (2.1, 3.0)), bump(6.9, 2.0, (4.8, 0.5))],
            // Only the left bump.
            vec![bump(1.8, 3.5, (1.8, 3.5))],
            // Both, with a lower extra mode at 4 in the left stretch: the higher (1.9)
            // stands for bump 1, and the dip to bump 2 is the lower of the two recorded
            // dips after it (3.0 at 1.2 < 1.6 at 5.5): ratio 1.2 / 1.9 ≈ 0.63.
            vec![
                bump(1.9, 3.0, (1.9, 3.0)),
                bump(4.0, 1.3, (3.0, 1.2)),
                bump(7.2, 1.9, (5.5, 1.6)),
            ],
            // Only a mode right at the split (5 belongs to the left stretch).
            vec![bump(5.0, 1.0, (5.0, 1.0))],
        ];
        let f = features(&draws, 0.5);
        let (bumps, dips) = match_bumps(&f, &grid, &mean, &[0.5]);
        assert_eq!(bumps.len(), 2);
        assert_eq!((bumps[0].reference, bumps[1].reference), (2.0, 7.0));
        assert_eq!((bumps[0].from, bumps[0].to), (None, Some(5.0)));
        assert_eq!((bumps[1].from, bumps[1].to), (Some(5.0), None));
        assert_eq!(bumps[0].probability, 1.0);
        assert_eq!(bumps[1].probability, 0.5);
        // Bump 1's locations: 2.1, 1.8, 1.9, 5.0 → median 2.0 (numpy's default quantile).
        assert!((bumps[0].location.as_ref().unwrap().median - 2.0).abs() < 1e-12);
        let d = &dips[0];
        assert_eq!(d.between, [1, 2]);
        assert_eq!(d.probability_both, 0.5);
        let loc = d.location.as_ref().unwrap();
        assert!((loc.median - 0.5 * (4.8 + 3.0)).abs() < 1e-12);
        let r = d.ratio.as_ref().unwrap();
        assert!((r.median - 0.5 * (0.25 + 1.2 / 1.9)).abs() < 1e-12);
        // Visible below 0.5: only the first draw, of four.
        assert_eq!(d.probability_visible, 0.25);
    }

    #[test]
    fn no_mode_in_the_mean_gives_no_bumps() {
        let grid: Vec<f64> = (0..5).map(|i| i as f64).collect();
        let f = features(&[vec![bump(1.0, 1.0, (1.0, 1.0))]], 0.9);
        let (b, d) = match_bumps(&f, &grid, &[0.0, 1.0, 2.0, 3.0, 4.0], &[0.9]);
        assert!(b.is_empty() && d.is_empty());
    }
}
