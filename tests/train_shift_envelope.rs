//! Trains, lateral shift and the duration envelope, checked against hand derivations, first
//! principles and an independent DXF reader (ezdxf).

mod common;

use loopwright::brief::{Brief, BriefInput, ShapeKind};
use loopwright::checks::envelope::{Axis, Bound, EnvelopeTable, evaluate};
use loopwright::dynamics::{Conditions, Train, simulate, simulate_train};
use loopwright::geometry::Centreline;
use loopwright::optimiser::design_family;
use loopwright::shape::family;
use loopwright::units::STANDARD_GRAVITY_M_S2 as G;

fn circle_path(r: f64, lead_m: f64, shift_m: f64) -> Centreline {
    let p = family(ShapeKind::Circle)
        .unwrap()
        .curvature_with_leads(&[], r, lead_m)
        .unwrap();
    Centreline::build_shifted(&p, 1.1, 0.05, shift_m)
}

/// Issue floor: a one-car train reproduces the point-mass results exactly (bit for bit), on every
/// family, with losses and with a shifted (3D) path, whatever its pitch; and two cars at one place
/// ride as the point mass.
#[test]
fn one_car_train_is_the_point_mass_exactly() {
    let cond = Conditions {
        entry_speed_m_s: 25.0,
        rolling_resistance: 0.015,
        drag_per_metre: 2.45e-4,
    };
    for kind in ShapeKind::ALL {
        let f = family(kind).unwrap();
        let p = f
            .curvature_with_leads(&f.default_shape(), 7.0, 5.0)
            .unwrap();
        let path = Centreline::build_shifted(&p, 1.1, 0.05, 2.5);
        let point = simulate(&path, &cond).unwrap();
        // One integrator serves both; a lone car's pitch must play no part.
        let train = simulate_train(
            &path,
            &cond,
            &Train {
                cars: 1,
                car_pitch_m: 2.5,
            },
        )
        .unwrap();
        assert_eq!(train.cars.len(), 1);
        let got = &train.cars[0];
        assert_eq!(got.points.len(), point.points.len());
        if let Some(i) = (0..got.points.len()).find(|&i| got.points[i] != point.points[i]) {
            for k in i.saturating_sub(2)..(i + 3).min(got.points.len()) {
                eprintln!(
                    "{k}: train {:?}\n{k}: point {:?}",
                    got.points[k], point.points[k]
                );
            }
            panic!(
                "{kind}: point {i} differs:\n train {:?}\n point {:?}",
                got.points[i], point.points[i]
            );
        }
        assert_eq!(got.steps, point.steps, "{kind}");
        // Two cars at one place (zero pitch) are one point mass of twice the mass: every mean over
        // the cars is that car's value, (a + a)/2 = a exactly (first principles); only the forward
        // load sees the second car's tangent re-normalised between stations, to rounding. Where the
        // curvature steps (the circle), the second car, placed between stations, takes the
        // curvature after the step, so the loss rate there and the speed after it differ slightly.
        let pair = simulate_train(
            &path,
            &cond,
            &Train {
                cars: 2,
                car_pitch_m: 0.0,
            },
        )
        .unwrap();
        for car in &pair.cars {
            if path.steps.is_empty() {
                for (a, b) in car.points.iter().zip(&point.points) {
                    assert_eq!(a.speed_m_s, b.speed_m_s, "{kind}");
                    assert_eq!(a.normal_g, b.normal_g, "{kind}");
                    assert_eq!(a.time_s, b.time_s, "{kind}");
                    assert_eq!(a.onset_g_s, b.onset_g_s, "{kind}");
                    assert!(
                        (a.tangential_g - b.tangential_g).abs() < 1e-15,
                        "{kind} {a:?} {b:?}"
                    );
                }
            } else {
                let worst = (car.points.iter().zip(&point.points))
                    .map(|(a, b)| (a.speed_m_s - b.speed_m_s).abs())
                    .fold(0.0, f64::max);
                assert!(worst < 2e-3, "{kind}: {worst} m/s");
            }
        }
    }
}

/// The spread pass at zero shift against the planar build, for every family across its shape
/// range: frames, rail and curvature agree to rounding (1e-12; the pass works the frames out
/// from the derivatives r′ = (cos θ, 0, sin θ), r″ = κ·(−sin θ, 0, cos θ), the planar build
/// from θ directly), so skipping the pass for a zero shift changes nothing but rounding.
#[test]
fn zero_shift_pass_agrees_with_the_planar_build_for_every_family() {
    for kind in ShapeKind::ALL {
        let f = family(kind).unwrap();
        let bounds = f.shape_bounds();
        for u in [0.0, 0.5, 1.0] {
            let shape: Vec<f64> = bounds.iter().map(|(lo, hi)| lo + u * (hi - lo)).collect();
            let Ok(p) = f.curvature_with_leads(&shape, 7.0, 5.0) else {
                continue;
            };
            for spacing in [0.05, 7.0 / 16.0] {
                let planar = Centreline::build(&p, 1.1, spacing);
                let pass = Centreline::build(&p, 1.1, spacing).with_lateral_shift(0.0);
                assert_eq!(planar.steps, pass.steps, "{kind}");
                assert_eq!(planar.loop_span_m, pass.loop_span_m, "{kind}");
                for (a, b) in planar.stations.iter().zip(&pass.stations) {
                    assert_eq!((a.s_m, a.heartline_m), (b.s_m, b.heartline_m), "{kind}");
                    let worst = [
                        (a.rail_m - b.rail_m).norm(),
                        (a.tangent - b.tangent).norm(),
                        (a.left - b.left).norm(),
                        (a.curvature_vec_1_m - b.curvature_vec_1_m).norm(),
                        (a.curvature_1_m - b.curvature_1_m).abs(),
                    ]
                    .into_iter()
                    .fold(0.0, f64::max);
                    assert!(worst < 1e-12, "{kind} {shape:?}: {worst}");
                }
            }
        }
    }
}

/// Issue floor: zero shift gives back the planar loop (geometry and loads to rounding). The
/// spread pass run with a zero shift must agree with the planar build to rounding: that is why
/// `build_shifted` returns the planar build itself for a zero shift (checked to the bit here).
#[test]
fn zero_shift_is_the_planar_loop() {
    let f = family(ShapeKind::Clothoid).unwrap();
    let p = f
        .curvature_with_leads(&f.default_shape(), 8.0, 5.0)
        .unwrap();
    let planar = Centreline::build(&p, 1.1, 0.05);
    assert_eq!(
        format!("{:?}", Centreline::build_shifted(&p, 1.1, 0.05, 0.0)),
        format!("{planar:?}")
    );
    let flat = Centreline::build(&p, 1.1, 0.05).with_lateral_shift(0.0);
    assert_eq!(planar.stations.len(), flat.stations.len());
    for (a, b) in planar.stations.iter().zip(&flat.stations) {
        assert!((a.s_m - b.s_m).abs() < 1e-12);
        assert!((a.heartline_m - b.heartline_m).norm() < 1e-12 && b.heartline_m.y == 0.0);
        assert!((a.rail_m - b.rail_m).norm() < 1e-12);
        assert!((a.tangent - b.tangent).norm() < 1e-12 && (a.head - b.head).norm() < 1e-12);
        assert!((a.left - b.left).norm() < 1e-12);
        assert!((a.curvature_vec_1_m - b.curvature_vec_1_m).norm() < 1e-12);
        assert!((a.curvature_1_m - b.curvature_1_m).abs() < 1e-12 && b.roll_rad().abs() < 1e-12);
    }
    assert_eq!(planar.loop_span_m, flat.loop_span_m);
    let c = Conditions::lossless(25.0);
    let (ra, rb) = (simulate(&planar, &c).unwrap(), simulate(&flat, &c).unwrap());
    for (a, b) in ra.points.iter().zip(&rb.points) {
        assert!((a.normal_g - b.normal_g).abs() < 1e-9 && b.lateral_g.abs() < 1e-12);
    }
    // A real shift moves the exit sideways by exactly the shift and makes lateral load and roll.
    let shifted = Centreline::build_shifted(&p, 1.1, 0.05, 3.0);
    let last = shifted.stations.last().unwrap();
    assert!((last.heartline_m.y - 3.0).abs() < 1e-12 && (last.rail_m.y - 3.0).abs() < 1e-12);
    let rs = simulate(&shifted, &c).unwrap();
    assert!(
        rs.points
            .iter()
            .map(|p| p.lateral_g.abs())
            .fold(0.0, f64::max)
            > 1e-3
    );
    assert!(shifted.peak_roll_rad() > 1e-3);
    // The loop's height does not change (z depends only on the planar arc length).
    assert!((shifted.loop_height_m() - planar.loop_height_m()).abs() < 1e-12);
}

/// Lateral load from the shift against first principles: on the level lead-out of a shifted loop
/// nothing is lateral, and at the loop's mid-point (the top, where y'' = 0 for the smootherstep and
/// the head points straight down) the lateral load is −v²·(κ⃗·left)/g with κ⃗ the 3D curvature of
/// r(σ) = (x, y, z): we recompute κ⃗ there by central differences of the sampled heartline.
#[test]
fn lateral_load_matches_finite_difference_curvature() {
    let path = circle_path(9.0, 3.0, 3.0);
    let ride = simulate(&path, &Conditions::lossless(26.0)).unwrap();
    for i in [
        path.stations.len() / 4,
        path.top_index(),
        3 * path.stations.len() / 5,
    ] {
        let (a, b, c) = (
            &path.stations[i - 1],
            &path.stations[i],
            &path.stations[i + 1],
        );
        // Second derivative of position by arc length, non-uniform three-point formula.
        let (h1, h2) = (b.s_m - a.s_m, c.s_m - b.s_m);
        let kvec = 2.0
            * ((c.heartline_m - b.heartline_m) / h2 - (b.heartline_m - a.heartline_m) / h1)
            / (h1 + h2);
        let v2 = ride.points[i].speed_m_s.powi(2);
        // Felt lateral = (v²κ⃗ + g ẑ)·left / g (specific force, rider's left axis).
        let expect = (v2 * kvec.dot(&b.left) + G * b.left.z) / G;
        assert!(
            (ride.points[i].lateral_g - expect).abs() < 2e-3,
            "at {i}: {} vs {expect}",
            ride.points[i].lateral_g
        );
    }
}

/// Hand-computed train on a lossless circle of radius R entered from level track, cars a pitch p
/// apart along the heartline, entry speed v₀ (all cars level at entry). All cars share one speed;
/// energy of the whole train (equal masses): v² = v₀² − 2g·z̄, z̄ the mean car height. A car at
/// angle φ round the circle is at z = R(1 − cos φ), and at the top (head to the centre)
/// n = v²/(gR) − 1; just after the entry n = 1 + v²/(gR). With α = p/R:
/// - two cars, front at the top: the rear is at φ = π − α, z̄ = R(3 + cos α)/2, so
///   n_top = (v₀² − gR(3 + cos α))/(gR) − 1; by symmetry the rear car at the top sees the same;
/// - front at the bottom: the rear is still on the level lead, z̄ = 0, n = 1 + v₀²/(gR);
/// - rear at the bottom: the front is at φ = α, z̄ = R(1 − cos α)/2, n = 1 + v₀²/(gR) − (1 − cos α);
/// - three cars, middle at the top: z̄ = R(2 + 2(1 + cos α))/3; front at the top:
///   z̄ = R(2 + (1 + cos α) + (1 + cos 2α))/3, so the middle car feels the least at the top.
#[test]
fn two_and_three_car_circle_match_the_hand_derivation() {
    let (r, v0, pitch) = (9.0, 26.0, 2.37);
    let path = circle_path(r, 3.0, 0.0);
    let a = pitch / r;
    let top = path.top_index();
    let bottom = path.stations.iter().position(|s| s.piece == 1).unwrap();
    let two = simulate_train(
        &path,
        &Conditions::lossless(v0),
        &Train {
            cars: 2,
            car_pitch_m: pitch,
        },
    )
    .unwrap();
    let n_top = (v0 * v0 - G * r * (3.0 + a.cos())) / (G * r) - 1.0;
    for j in 0..2 {
        let got = two.cars[j].points[top].normal_g;
        assert!((got - n_top).abs() < 1e-6, "car {j} top {got} vs {n_top}");
    }
    let n_front_bottom = 1.0 + v0 * v0 / (G * r);
    let n_rear_bottom = n_front_bottom - (1.0 - a.cos());
    assert!((two.cars[0].points[bottom].normal_g - n_front_bottom).abs() < 1e-6);
    assert!(
        (two.cars[1].points[bottom].normal_g - n_rear_bottom).abs() < 1e-6,
        "{}",
        two.cars[1].points[bottom].normal_g
    );
    // The point mass at the top: n = (v₀² − 4gR)/(gR) − 1, lower by 1 − cos α than the train's.
    let point = simulate(&path, &Conditions::lossless(v0)).unwrap();
    assert!((n_top - point.points[top].normal_g - (1.0 - a.cos())).abs() < 1e-6);

    let three = simulate_train(
        &path,
        &Conditions::lossless(v0),
        &Train {
            cars: 3,
            car_pitch_m: pitch,
        },
    )
    .unwrap();
    let zbar_mid = r * (2.0 + 2.0 * (1.0 + a.cos())) / 3.0;
    let zbar_front = r * (2.0 + (1.0 + a.cos()) + (1.0 + (2.0 * a).cos())) / 3.0;
    let n_mid = (v0 * v0 - 2.0 * G * zbar_mid) / (G * r) - 1.0;
    let n_front = (v0 * v0 - 2.0 * G * zbar_front) / (G * r) - 1.0;
    assert!((three.cars[1].points[top].normal_g - n_mid).abs() < 1e-6);
    assert!((three.cars[0].points[top].normal_g - n_front).abs() < 1e-6);
    assert!((three.cars[2].points[top].normal_g - n_front).abs() < 1e-6);
    assert!(n_mid < n_front);
}

/// A train longer than the lead track: the cars behind the entry ride a virtual level extension,
/// so the front car's entry load is still 1 + v₀²/(gR) (whole train level) and the speed when the
/// front car starts is the entry speed.
#[test]
fn train_longer_than_the_lead_runs_on_a_virtual_lead() {
    let (r, v0) = (9.0, 26.0);
    let path = circle_path(r, 1.0, 0.0);
    let t = simulate_train(
        &path,
        &Conditions::lossless(v0),
        &Train {
            cars: 6,
            car_pitch_m: 2.0,
        },
    )
    .unwrap();
    let bottom = path.stations.iter().position(|s| s.piece == 1).unwrap();
    assert!((t.cars[0].points[0].speed_m_s - v0).abs() < 1e-12);
    assert!((t.cars[0].points[bottom].normal_g - (1.0 + v0 * v0 / (G * r))).abs() < 1e-9);
    // Lossless energy: when the rear car leaves, the whole train is back on level track at v₀.
    let last = t.cars[5].points.last().unwrap();
    assert!((last.speed_m_s - v0).abs() < 1e-6, "{}", last.speed_m_s);
}

/// Issue floor: an envelope built to fail (a level held too long) is reported failing.
/// On 100 m of level track at 20 m/s (lossless) the rider feels exactly 1 g for 100/20 = 5 s
/// (first principles), so "above 0.9 g for at most 1 s" fails with a 5 s run and "at most 10 s"
/// passes.
#[test]
fn a_level_held_too_long_fails() {
    use loopwright::shape::{CurvatureProfile, CurvatureSegment};
    let p = CurvatureProfile::new(vec![CurvatureSegment::straight(100.0)], (0, 0));
    let path = Centreline::build(&p, 1.1, 0.05);
    let ride = simulate_train(&path, &Conditions::lossless(20.0), &Train::single()).unwrap();
    let table = EnvelopeTable::from_toml(
        "[normal]\nlevel = [{ duration_s = 1.0, max_g = 0.9, min_g = -1.0 }, { duration_s = 10.0, max_g = 0.95, min_g = -1.0 }]",
    )
    .unwrap();
    let rep = evaluate(&table, &path, &ride);
    let above: Vec<_> = rep
        .levels
        .iter()
        .filter(|l| l.bound == Bound::Above)
        .collect();
    assert!(
        !above[0].pass && (above[0].longest_s - 5.0).abs() < 1e-9,
        "{:?}",
        above[0]
    );
    assert!(above[1].pass && (above[1].longest_s - 5.0).abs() < 1e-9);
    assert!(!rep.pass);
    assert!(
        rep.failures()
            .iter()
            .any(|f| f.contains("normal above 0.900 g") && f.contains("FAIL"))
    );
}

/// The same on a curved case: on a lossless circle (R, v₀) the rider feels
/// n(φ) = v₀²/(gR) − 2 + 3cos φ (energy plus vertical circular motion), so from the entry the load
/// stays above L until cos φ* = (L + 2 − v₀²/(gR))/3, a time T = ∫₀^φ* R dφ / √(v₀² − 2gR(1 − cos φ)),
/// which this test integrates by Simpson's rule on its own. Levels allowing T/2 fail, 2T pass.
#[test]
fn envelope_run_on_a_circle_matches_the_integral() {
    let (r, v0, level) = (9.0, 26.0, 5.0);
    let path = circle_path(r, 3.0, 0.0);
    let ride = simulate_train(&path, &Conditions::lossless(v0), &Train::single()).unwrap();
    let phi_star = ((level + 2.0 - v0 * v0 / (G * r)) / 3.0).acos();
    let n = 4000;
    let h = phi_star / n as f64;
    let f = |phi: f64| r / (v0 * v0 - 2.0 * G * r * (1.0 - phi.cos())).sqrt();
    let simpson: f64 = (0..=n)
        .map(|i| {
            let w = if i == 0 || i == n {
                1.0
            } else if i % 2 == 1 {
                4.0
            } else {
                2.0
            };
            w * f(i as f64 * h)
        })
        .sum::<f64>()
        * h
        / 3.0;
    for (allowed, pass) in [(0.5 * simpson, false), (2.0 * simpson, true)] {
        let toml = format!(
            "[normal]\nlevel = [{{ duration_s = {allowed}, max_g = {level}, min_g = -2.0 }}]"
        );
        let rep = evaluate(&EnvelopeTable::from_toml(&toml).unwrap(), &path, &ride);
        let l = rep
            .levels
            .iter()
            .find(|l| l.bound == Bound::Above && l.axis == Axis::Normal)
            .unwrap();
        assert!(
            (l.longest_s - simpson).abs() < 2e-3,
            "run {} s vs integral {simpson} s",
            l.longest_s
        );
        assert_eq!(l.pass, pass);
        // The run starts at the loop entry (s = lead length) or, the loop being symmetric, ends at
        // its exit (s = lead + 2πR); rounding decides which of the two equal runs is the longest.
        let (a, b) = l.run_s_m.unwrap();
        let exit = 3.0 + 2.0 * std::f64::consts::PI * r;
        assert!(
            (a - 3.0).abs() < 1e-9 || (b - exit).abs() < 1e-9,
            "run from {a} to {b}"
        );
    }
}

/// Hostile limit files get a clear message naming the field, and the CLI exits 2 before designing.
#[test]
fn hostile_limit_files_are_rejected_clearly() {
    let lvl = |d: &str, max: &str, min: &str| {
        format!("[normal]\nlevel = [{{ duration_s = {d}, max_g = {max}, min_g = {min} }}]")
    };
    let cases = [
        (
            format!("{}\nsurprise = 1", lvl("1.0", "5.0", "-1.0")),
            "surprise",
        ),
        (
            "[normal]\nlevel = [{ duration_s = 1.0, max_g = 5.0, min_g = -1.0, colour = \"red\" }]"
                .to_string(),
            "colour",
        ),
        (lvl("nan", "5.0", "-1.0"), "normal.level[0].duration_s"),
        (lvl("-1.0", "5.0", "-1.0"), "normal.level[0].duration_s"),
        (lvl("1.0", "inf", "-1.0"), "normal.level[0].max_g"),
        (lvl("1.0", "2.0", "3.0"), "normal.level[0].min_g"),
        (
            "[lateral]\nmax_onset_g_s = -4.0".to_string(),
            "lateral.max_onset_g_s",
        ),
        ("title = \"nothing\"".to_string(), "sets no limit"),
        ("[normal\nlevel = 3".to_string(), "not a valid limits table"),
    ];
    for (text, needle) in &cases {
        let e = EnvelopeTable::from_toml(text).unwrap_err().to_string();
        assert!(
            e.contains(needle),
            "{text:?}: message {e:?} lacks {needle:?}"
        );
    }
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("bad.toml");
    std::fs::write(&f, lvl("-2.0", "5.0", "-1.0")).unwrap();
    let out = dir.path().join("out");
    let code = loopwright::cli::main_with_args([
        "loopwright",
        "design",
        "--limits",
        f.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, loopwright::cli::EXIT_USAGE);
    assert!(
        !out.exists(),
        "nothing may be written for a bad limits file"
    );
    let missing = dir.path().join("missing.toml");
    let code = loopwright::cli::main_with_args([
        "loopwright",
        "design",
        "--limits",
        missing.to_str().unwrap(),
    ]);
    assert_eq!(code, loopwright::cli::EXIT_USAGE);
}

/// A user's envelope that the demo design cannot meet (its loads stay above 2 g far longer than
/// the 0.05 s this table allows; the demo's time above 3 g alone is about 0.9 s, see its report)
/// makes `design --limits` exit 3 and write nothing, with the failing level in the message.
#[test]
fn a_failing_user_envelope_exits_infeasible() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("strict.toml");
    std::fs::write(
        &f,
        "[normal]\nlevel = [{ duration_s = 0.05, max_g = 2.0, min_g = -1.0 }]",
    )
    .unwrap();
    let out = dir.path().join("out");
    let code = loopwright::cli::main_with_args([
        "loopwright",
        "design",
        "--spacing",
        "0.1",
        "--limits",
        f.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, loopwright::cli::EXIT_INFEASIBLE);
    assert!(!out.exists());
    // The same check in-process names the level and the run.
    let mut b = Brief::demo();
    b.spacing_m = 0.1;
    let d = design_family(&b, ShapeKind::Clothoid).unwrap();
    let table = EnvelopeTable::from_toml(&std::fs::read_to_string(&f).unwrap()).unwrap();
    let rep =
        loopwright::checks::envelope::evaluate(&table, &d.verification.path, &d.verification.train);
    let l = &rep.levels[0];
    assert!(!l.pass && l.longest_s > 0.5, "{l:?}");
    assert!(rep.failures()[0].contains("normal above 2.000 g for at most 0.050 s"));
    // With the table in the brief, the model enforces it: the design is refused with the level.
    b.limits_table = Some(table);
    let inf = design_family(&b, ShapeKind::Clothoid).unwrap_err();
    assert!(
        inf.reasons
            .iter()
            .any(|r| r.contains("normal above 2.000 g for at most 0.050 s")),
        "{inf}"
    );
}

/// Hostile train and shift values in a brief are refused with the field, value and range.
#[test]
fn hostile_train_and_shift_fields_are_rejected() {
    for (text, field) in [
        ("cars = 0", "cars"),
        ("cars = 41", "cars"),
        ("cars = 2.5", "(file)"),
        ("car_pitch_m = nan", "car_pitch_m"),
        ("car_pitch_m = -2.0", "car_pitch_m"),
        ("cars = 40\ncar_pitch_m = 20.0", "car_pitch_m"),
        ("lateral_shift_m = inf", "lateral_shift_m"),
        ("lateral_shift_m = 1e9", "lateral_shift_m"),
        ("limits_file = \" \"", "limits_file"),
    ] {
        let e = BriefInput::from_toml(text)
            .and_then(|b| b.resolve())
            .unwrap_err();
        assert_eq!(e.field, field, "{text}: {e}");
    }
    for flags in [
        ["--cars", "-3"],
        ["--car-pitch", "NaN"],
        ["--lateral-shift", "-1e6"],
    ] {
        let code = loopwright::cli::main_with_args(["loopwright", "design", flags[0], flags[1]]);
        assert_eq!(code, loopwright::cli::EXIT_USAGE, "{flags:?}");
    }
}

/// The optimiser constrains the worst car: a 7-car demo design meets every limit in every car at
/// the verification sampling, the binding limit is met by the worst car (not the front one
/// necessarily), and the JSON lists every car and every envelope level.
#[test]
fn design_constrains_the_worst_car() {
    let mut b = Brief::demo();
    b.spacing_m = 0.1;
    b.cars = 7;
    b.car_pitch_m = 2.4;
    let d = design_family(&b, ShapeKind::Clothoid).unwrap();
    let v = &d.verification;
    assert_eq!(v.cars.len(), 7);
    for c in &v.cars {
        assert!(
            c.peak_normal_g <= b.max_g && c.top_normal_g >= b.min_top_g,
            "{c:?}"
        );
    }
    let worst_top = v
        .cars
        .iter()
        .map(|c| c.top_normal_g)
        .fold(f64::MAX, f64::min);
    let worst_peak = v
        .cars
        .iter()
        .map(|c| c.peak_normal_g)
        .fold(f64::MIN, f64::max);
    assert_eq!(v.summary.top_normal_g, worst_top);
    assert_eq!(v.summary.peak_normal_g, worst_peak);
    // Tallest objective: some limit binds on the worst car, less its design margin (search
    // margin 1e-4, finer re-check); the top-load limit binds on the least inverted load.
    let m = loopwright::checks::limits::DESIGN_MARGIN.load_g;
    let least = v.summary.min_inverted_normal_g;
    assert!(
        (least - b.min_top_g - m).abs() < 5e-3 || (b.max_g - m - worst_peak).abs() < 5e-3,
        "{least} {worst_peak}"
    );
    // The middle car gets the least at the top (its neighbours sit symmetrically below it).
    let mid = v.train.train.middle();
    assert!(
        v.cars[mid].top_normal_g < v.cars[0].top_normal_g
            && v.cars[mid].top_normal_g < v.cars[6].top_normal_g
    );
    let json: serde_json::Value =
        serde_json::from_slice(&loopwright::export::json::report_json(&d).unwrap()).unwrap();
    assert_eq!(json["per_car"].as_array().unwrap().len(), 7);
    assert_eq!(json["envelope"]["levels"].as_array().unwrap().len(), 2 * 10);
    assert!(json["envelope"]["illustrative"].as_bool().unwrap());
    let csv = String::from_utf8(loopwright::export::table::cars_csv(&d).unwrap()).unwrap();
    assert_eq!(csv.lines().count(), 1 + 7 * d.best.path.stations.len());
    let text = loopwright::report::terminal_summary(&d);
    assert!(
        text.contains("front")
            && text.contains("middle")
            && text.contains("rear")
            && text.contains("ILLUSTRATIVE")
    );
}

/// Issue floor: the DXF of a shifted loop passes the ezdxf audit (an independent reader, PyPI)
/// and its heartline spans the shift in Y, i.e. the polylines are truly 3D.
#[test]
fn shifted_loop_dxf_is_3d_and_passes_ezdxf_audit() {
    let mut b = Brief::demo();
    b.lateral_shift_m = 3.0;
    let d = design_family(&b, ShapeKind::Clothoid).unwrap();
    let bytes = loopwright::export::dxf::dxf_bytes(&d).expect("DXF encodes");
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("shifted.dxf");
    std::fs::write(&f, bytes).unwrap();
    // The heartline spans the full shift in Y; allow 1 mm for the writer's number formatting.
    let out = common::python("dxf_extents.py", &[&f], &["2.999"]);
    assert!(out.lines().any(|l| l == "PASS"), "{out}");
}

/// The envelope lines for the plot come with labels and the arc-length span of each worst run.
#[test]
fn plot_lines_describe_each_level() {
    let path = circle_path(9.0, 3.0, 0.0);
    let ride = simulate_train(&path, &Conditions::lossless(26.0), &Train::single()).unwrap();
    let rep = evaluate(&EnvelopeTable::illustrative(), &path, &ride);
    let lines = rep.plot_lines();
    assert_eq!(lines.len(), rep.levels.len());
    // At 26 m/s into a 9 m circle the entry load is 1 + 26²/(9g) = 8.66 g: above the 6 g absolute level.
    let six = lines
        .iter()
        .find(|l| l.axis == Axis::Normal && l.bound == Bound::Above && l.level_g == 6.0)
        .unwrap();
    assert!(!six.pass && six.run_s_m.is_some() && six.label.contains("FAIL"));
}

/// The point of the shift: a planar loop runs into itself (its side view crosses where the exit
/// passes the entry climb), a shifted one passes beside itself. Measured as the smallest 3D
/// distance between heartline points more than half a loop apart along the track (first
/// principles; the smootherstep puts the two branches almost a full shift apart at the crossing).
#[test]
fn shifted_loop_clears_itself_and_planar_does_not() {
    let f = family(ShapeKind::Clothoid).unwrap();
    let p = f
        .curvature_with_leads(&f.default_shape(), 8.0, 5.0)
        .unwrap();
    let clearance = |shift: f64| {
        let c = Centreline::build_shifted(&p, 1.1, 0.1, shift);
        let half = 0.5 * c.loop_length_m();
        let st = &c.stations;
        let mut best = f64::MAX;
        for a in st {
            for b in st.iter().filter(|b| b.s_m - a.s_m > half) {
                best = best.min((a.heartline_m - b.heartline_m).norm());
            }
        }
        best
    };
    let planar = clearance(0.0);
    let shifted = clearance(2.5);
    eprintln!("closest approach: planar {planar:.4} m, shifted {shifted:.4} m");
    assert!(
        planar < 0.2,
        "the planar loop should meet itself, closest {planar} m"
    );
    assert!(
        shifted > 0.9 * 2.5 && shifted <= 2.5 + 1e-9,
        "shifted closest {shifted} m"
    );
}
