use mixband::config::{Kernel, WeightsKind};
use mixband::data::{Cells, Transform};
use mixband::model::{Concentration, Prior, VarScale};
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{initial_state_from_cells, sweep_opts, SweepOptions};

#[test]
fn scratch() {
    let text = std::fs::read_to_string("demo-data/warbler-wings.csv").unwrap();
    let mut x: Vec<f64> = text
        .lines()
        .skip_while(|l| l.starts_with('#'))
        .skip(1)
        .filter_map(|l| l.split(',').nth(1)?.parse().ok())
        .collect();
    let n = x.len() as f64;
    let mean = x.iter().sum::<f64>() / n;
    let sd = (x.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / n).sqrt();
    eprintln!("n {n} mean {mean} sd {sd}");
    let cells = Cells::from_rows(&x, None, 0.1, Transform::None, mean, sd);
    x.clear();
    let prior = Prior {
        kernel: Kernel::LocationScale,
        weights: WeightsKind::Dirichlet,
        components: 10,
        centre: 0.0,
        centre_sd: 1.0,
        centre_shrink: 0.1,
        var_shape: 2.0,
        var_scale: VarScale::Gamma {
            shape: 2.0,
            rate: 2.0,
        },
        concentration: Concentration::Fixed(0.1),
        label_moves: false,
        collapsed: false,
    };
    let key = StreamKey::new(1, 1);
    let mut st = initial_state_from_cells(&cells, &prior, &key);
    let (mut p, mut a) = (0u64, 0u64);
    for t in 1..=2000u64 {
        let o = sweep_opts(
            &[],
            &prior,
            &mut st,
            &key,
            t,
            &SweepOptions {
                cells: Some(&cells),
                ..SweepOptions::default()
            },
        );
        if t > 200 {
            p += o.cell_moves.proposed as u64;
            a += o.cell_moves.accepted as u64;
        }
        if t % 200 == 0 {
            eprintln!(
                "t {t} occ {} acc {:.3} sds {:?}",
                o.occupied,
                a as f64 / p as f64,
                st.var
                    .iter()
                    .map(|v| (v.sqrt() * sd * 100.0).round() / 100.0)
                    .collect::<Vec<_>>()
            );
        }
    }
}
