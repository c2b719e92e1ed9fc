//! Accuracy study of `fixsight-verify calibrate` on rendered views: how
//! close the recovered intrinsics and distortion come to the truth for a
//! given number of views.
//!
//! ```sh
//! cargo run --release -p fixsight-verify --example calibration_study -- [brown|fisheye] [trials] [width height]
//! ```
//!
//! Per trial (seed), 20 views are drawn and rendered ([`synth`]: blur
//! 0.8 px, read noise 2 DN plus shot noise, vignetting 0.3); the board is
//! sought in each, and the first `n` views where it was found are
//! calibrated, for each `n` in the list. Printed per `n`, as "median /
//! worst" over the trials: the larger focal-length error (%), the
//! principal-point error (px), the errors of `k1` and `k2`, the lens-map
//! error (px; [`synth::map_error`]) over the disc the corners reach and its
//! largest value over the whole image, and the reprojection RMS; then how
//! many trials the calibration refused and how many had fewer than `n`
//! boards found. Above the table: the corner accuracy against the true
//! positions over every view found.

use fixsight_verify::calibrate::{calibrate, corners, synth, ModelKind};

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let model = ModelKind::parse(args.first().map_or("brown", |s| s.as_str())).unwrap();
    let trials: u64 = args.get(1).map_or(5, |s| s.parse().unwrap());
    let w: usize = args.get(2).map_or(640, |s| s.parse().unwrap());
    let h: usize = args.get(3).map_or(480, |s| s.parse().unwrap());
    let spec = match model {
        ModelKind::Brown => synth::SynthSpec::wide_angle(w, h),
        ModelKind::Fisheye => synth::SynthSpec::fisheye(w, h),
    };
    let counts = [3usize, 4, 5, 7, 10, 15, 20];
    // rows[count] = per-trial (f %, c px, map covered, map whole, reproj)
    let mut rows: Vec<Vec<[f64; 8]>> = vec![Vec::new(); counts.len()];
    let mut short = vec![0usize; counts.len()];
    let mut fails = vec![0usize; counts.len()];
    let (mut c2, mut cn, mut cmax, mut found_total, mut drawn) =
        (0.0, 0usize, 0f64, 0usize, 0usize);
    for trial in 0..trials {
        let poses = synth::poses(&spec, 20, 1000 + trial).expect("poses");
        let mut views = Vec::new();
        for (k, p) in poses.iter().enumerate() {
            drawn += 1;
            let g = synth::render(&spec, p, 10_000 * (trial + 1) + k as u64);
            if let Ok(c) = corners::find_board(&g, &spec.board) {
                let truth = synth::true_corners(&spec, p).unwrap();
                for (a, b) in c.iter().zip(&truth) {
                    let d = (a.0 - b.0).hypot(a.1 - b.1);
                    c2 += d * d;
                    cn += 1;
                    cmax = cmax.max(d);
                }
                views.push(c);
                found_total += 1;
            }
        }
        for (ci, &n) in counts.iter().enumerate() {
            if views.len() < n {
                short[ci] += 1;
                continue;
            }
            match calibrate(&spec.board, &views[..n], (w, h), model) {
                Ok(fit) => {
                    let (k, t) = (fit.camera.intrinsics, spec.camera.intrinsics);
                    let f_err = 100.0 * ((k.fx / t.fx - 1.0).abs()).max((k.fy / t.fy - 1.0).abs());
                    let c_err = (k.cx - t.cx).hypot(k.cy - t.cy);
                    let used: Vec<(f64, f64)> = views[..n].iter().flatten().copied().collect();
                    let reach_px = used
                        .iter()
                        .map(|p| (p.0 - t.cx).hypot(p.1 - t.cy))
                        .fold(0.0, f64::max);
                    let covered = synth::map_error(&spec.camera, &fit.camera, w, h, 4, reach_px);
                    let whole = synth::map_error(&spec.camera, &fit.camera, w, h, 4, f64::INFINITY);
                    let (kf, kt) = (
                        fixsight_verify::calibrate::coefficients(&fit.camera.lens),
                        fixsight_verify::calibrate::coefficients(&spec.camera.lens),
                    );
                    rows[ci].push([
                        f_err,
                        c_err,
                        (kf[0] - kt[0]).abs(),
                        (kf[1] - kt[1]).abs(),
                        covered.1,
                        covered.0,
                        whole.0,
                        fit.rms_px,
                    ]);
                }
                Err(e) => {
                    eprintln!("trial {trial}, {n} views: {e}");
                    fails[ci] += 1;
                }
            }
        }
    }
    println!(
        "model {}, {w}x{h}, {} trials, board {}x{}; boards found in {found_total} of {drawn} views",
        model.word(),
        trials,
        spec.board.cols,
        spec.board.rows
    );
    println!(
        "corner error vs truth: RMS {:.4} px, worst {:.4} px over {cn} corners",
        (c2 / cn.max(1) as f64).sqrt(),
        cmax
    );
    println!("| views | fx/fy error % | principal point error px | k1 error | k2 error | map RMS px, reached disc | map max px, reached disc | map max px, whole image | reprojection RMS px | refused / too few boards |");
    println!("|---|---|---|---|---|---|---|---|---|---|");
    for (ci, &n) in counts.iter().enumerate() {
        let r = &rows[ci];
        let stat = |i: usize| {
            let mut v: Vec<f64> = r.iter().map(|x| x[i]).collect();
            v.sort_by(|a, b| a.total_cmp(b));
            if v.is_empty() {
                "-".to_string()
            } else {
                let fmt = |x: f64| {
                    if x < 0.01 {
                        format!("{x:.4}")
                    } else {
                        format!("{x:.3}")
                    }
                };
                format!("{} / {}", fmt(v[v.len() / 2]), fmt(v[v.len() - 1]))
            }
        };
        println!(
            "| {n} | {} | {} | {} | {} | {} | {} | {} | {} | {} / {} |",
            stat(0),
            stat(1),
            stat(2),
            stat(3),
            stat(4),
            stat(5),
            stat(6),
            stat(7),
            fails[ci],
            short[ci]
        );
    }
}
