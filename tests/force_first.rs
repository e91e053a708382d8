//! The force-first `profile` family: a target load in, the shape that produces it out.
//!
//! The central check is the published constant-normal-force track (Nordmark & Essén, "The
//! comfortable roller coaster — on the shape of tracks with constant normal force", Eur. J. Phys.
//! 31 (2010) 1307). We do not copy their formulas (quoted from memory only); we derive the
//! invariants the test uses:
//!
//! On a frictionless track with normal load n (in g) constant, the normal equation is
//! n = v²κ/g + cos θ, so κ = g(n − cos θ)/v², and energy gives d(v²)/ds = −2g sin θ. With θ as
//! the variable (ds = dθ/κ): d(ln v²)/dθ = −2 sin θ/(n − cos θ) = −2 d/dθ ln(n − cos θ), hence
//!
//!   v²(θ) = v₀²·((n − 1)/(n − cos θ))²,   z(θ) = (v₀² − v²(θ))/(2g),
//!   κ(θ) = g(n − cos θ)³/(v₀²(n − 1)²).
//!
//! The comparison: loopwright solves the loop (its own RK4 in θ, Hermite cubic curvature pieces),
//! the geometry stage integrates those pieces into positions, and the dynamics stage re-simulates
//! the ride on them. At every station we compare the simulated speed, height and curvature with
//! the closed forms above at the station's own pitch θ, the simulated load with n, and (x, z) with
//! an independent scipy integration of the same ODE (tests/py/constant_load_track.py).

mod common;

use loopwright::brief::{Brief, BriefInput, ShapeKind};
use loopwright::dynamics::{Conditions, Losses, simulate};
use loopwright::geometry::Centreline;
use loopwright::optimiser::design_family;
use loopwright::optimiser::force_first::{ProfileSolver, curvature, solver};
use loopwright::shape::LoadProfile;
use loopwright::units::STANDARD_GRAVITY_M_S2 as G;
use std::f64::consts::PI;

fn profile_brief(extra: &str) -> Brief {
    let text = format!(
        "name = \"ff\"\nshape = \"profile\"\nentry_speed = 25.0\nrolling_resistance = 0.0\ndrag_area_m2 = 0.0\nmax_g = 6.0\nmin_top_g = -0.5\nmin_radius_m = 1.5\nlead_length_m = 3.0\nspacing_m = 0.05\n{extra}"
    );
    BriefInput::from_toml(&text).unwrap().resolve().unwrap()
}

#[test]
fn constant_load_gives_the_constant_normal_force_track() {
    let n = 3.0;
    let mut b = profile_brief(
        "[profile]\nangles_deg = [0.0, 180.0]\nnormal_g = [3.0, 3.0]\ntransition_deg = 0.0\n",
    );
    b.lead_length_m = 0.0;
    let profile = curvature(&b, &[n, n]).unwrap();
    let path = Centreline::build(&profile, 1.1, 0.05);
    let ride = simulate(&path, &Conditions::lossless(25.0)).unwrap();
    let u0 = 625.0;
    let mut worst = [0.0f64; 4];
    let mut rows = String::from("pitch_rad,x_m,z_m\n");
    for (st, p) in path.stations.iter().zip(&ride.points).skip(1) {
        let th = st.pitch_rad;
        let u = u0 * ((n - 1.0) / (n - th.cos())).powi(2);
        let z = (u0 - u) / (2.0 * G);
        let k = G * (n - th.cos()).powi(3) / (u0 * (n - 1.0).powi(2));
        worst[0] = worst[0].max((p.normal_g - n).abs());
        worst[1] = worst[1].max((p.speed_m_s - u.sqrt()).abs());
        worst[2] = worst[2].max((st.heartline_m.z - z).abs());
        worst[3] = worst[3].max(((st.curvature_1_m - k) / k).abs());
        rows.push_str(&format!(
            "{th:.15},{:.12},{:.12}\n",
            st.heartline_m.x, st.heartline_m.z
        ));
    }
    assert!(worst[0] < 1e-4, "load off by {} g", worst[0]);
    assert!(worst[1] < 1e-4, "speed off by {} m/s", worst[1]);
    assert!(worst[2] < 1e-4, "height off by {} m", worst[2]);
    assert!(worst[3] < 1e-6, "curvature off by {} (relative)", worst[3]);
    // Top: v_top² = v₀²((n−1)/(n+1))², height 4n·v₀²/(2g(n+1)²).
    let top = path.top();
    assert!((top.heartline_m.z - 4.0 * n * u0 / (2.0 * G * (n + 1.0).powi(2))).abs() < 1e-4);
    let dir = tempfile::tempdir().unwrap();
    let csv = dir.path().join("stations.csv");
    std::fs::write(&csv, rows).unwrap();
    let out = common::python("constant_load_track.py", &[&csv], &["3.0", "25.0", "1e-4"]);
    eprint!("{out}");
    eprintln!(
        "worst load {:.2e} g, speed {:.2e} m/s, height {:.2e} m, curvature {:.2e} relative",
        worst[0], worst[1], worst[2], worst[3]
    );
    assert!(out.contains("worst"), "{out}");
}

/// A shaped target with losses: the loads the dynamics stage computes on the solved loop (its own
/// geometry integration and energy-with-losses model, shared with every other family) must be the
/// target at each station's pitch, away from the transitions. The target itself is cross-checked
/// against scipy's PchipInterpolator (PyPI; Fritsch & Carlson 1980) through the mirrored control
/// points.
#[test]
fn shaped_target_with_losses_is_reproduced_by_the_dynamics() {
    let mut b = profile_brief(
        "[profile]\nangles_deg = [0.0, 40.0, 90.0, 140.0, 180.0]\nnormal_g = [3.6, 3.8, 2.4, 0.9, 0.4]\ntransition_deg = 25.0\n",
    );
    b.rolling_resistance = 0.015;
    b.drag_area_m2 = 1.0;
    let shape = b.profile.clone().unwrap().normal_g;
    let profile = curvature(&b, &shape).unwrap();
    let path = Centreline::build(&profile, 1.1, 0.05);
    let cond = Conditions {
        entry_speed_m_s: 25.0,
        rolling_resistance: b.rolling_resistance,
        drag_per_metre: b.drag_per_metre(),
    };
    let ride = simulate(&path, &cond).unwrap();
    let target = LoadProfile::new(b.profile.clone().unwrap()).target(&shape);
    let t_rad = 25f64.to_radians();
    let mut worst: f64 = 0.0;
    let mut grid = String::new();
    for (st, p) in path.stations.iter().zip(&ride.points) {
        let th = st.pitch_rad;
        if th > t_rad + 1e-9 && th < 2.0 * PI - t_rad - 1e-9 {
            worst = worst.max((p.normal_g - target.normal_g(th)).abs());
        }
    }
    eprintln!("worst |n − target| on the target part: {worst:.2e} g");
    assert!(worst < 2e-3, "worst {worst} g");
    // Curvature starts and ends at zero, continuously (no load step), and the loop turns 2π.
    assert!(ride.steps.is_empty(), "{:?}", ride.steps);
    let (s0, s1) = path.loop_span_m;
    assert!(
        profile.curvature_1_m(s0).abs() < 1e-12 && profile.curvature_1_m(s1 - 1e-9).abs() < 1e-6
    );
    assert!((path.stations.last().unwrap().pitch_rad - 2.0 * PI).abs() < 1e-9);
    // The exit height the solver predicted (its own RK4) is where the geometry stage's integration
    // of the curvature pieces ends: two integrations of the same loop agree.
    let solved = solver(&b).unwrap().solve(&shape).unwrap();
    let exit_z = path.stations.last().unwrap().heartline_m.z;
    eprintln!(
        "exit height {exit_z:.6} m, solver {:.6} m",
        solved.exit_height_m
    );
    assert!((exit_z - solved.exit_height_m).abs() < 1e-5);
    for th in [0.1, 0.5, 1.0, 2.0, 3.0, 3.5, 4.5, 6.0] {
        grid.push_str(&format!("{th} {:.12}\n", target.normal_g(th)));
    }
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("grid.txt");
    std::fs::write(&f, grid).unwrap();
    // The target is monotone (PCHIP) interpolation: scipy's PchipInterpolator (knots in rad).
    let knots: Vec<String> = [0., 40., 90., 140., 180., 220., 270., 320., 360.]
        .iter()
        .map(|d: &f64| format!("{:.17e}", d.to_radians()))
        .collect();
    let out = common::python(
        "pchip_check.py",
        &[&f],
        &[
            &knots.join(","),
            "3.6,3.8,2.4,0.9,0.4,0.9,2.4,3.8,3.6",
            "1e-9",
        ],
    );
    assert!(out.contains("worst"), "{out}");
}

fn solve_err(loads: &[f64], angles: &str, transition: f64, speed: f64) -> String {
    let spec = BriefInput::from_toml(&format!(
        "shape = \"profile\"\n[profile]\nangles_deg = {angles}\nnormal_g = {loads:?}\ntransition_deg = {transition}\n"
    ))
    .unwrap()
    .resolve()
    .unwrap()
    .profile
    .unwrap();
    ProfileSolver::new(LoadProfile::new(spec), speed, Losses::NONE)
        .solve(loads)
        .unwrap_err()
        .to_string()
}

/// A loop needs κ > 0 all the way round, i.e. n > cos θ (from n = v²κ/g + cos θ): 0.9 g at 25° is
/// below cos 25° = 0.906, so no track turns there.
#[test]
fn load_not_above_cos_theta_is_rejected() {
    let e = solve_err(&[0.9, 0.9], "[0.0, 180.0]", 25.0, 25.0);
    assert!(
        e.contains("not above cos θ = 0.906") && e.contains("θ = 25.0°"),
        "{e}"
    );
    // Above the top −1 g is the least a loop can have (cos 180° = −1): −0.98 g passes the
    // cos-test at the top, but a dip to −1 g there does not.
    let e = solve_err(&[3.0, -0.2, 1.0], "[0.0, 90.0, 180.0]", 10.0, 25.0);
    assert!(e.contains("not above cos θ"), "{e}");
}

/// Lossless constant load n gives v_top² = v₀²((n−1)/(n+1))² (derived above): 1.05 g at 25 m/s
/// leaves 0.61 m/s at the top, below the 1 m/s floor, so the speed "runs out".
#[test]
fn speed_running_out_is_rejected() {
    let e = solve_err(&[1.05, 1.05], "[0.0, 180.0]", 0.0, 25.0);
    assert!(e.contains("speed runs out"), "{e}");
}

/// The same failures reach the command line as an infeasible brief (exit 3) with the reason.
#[test]
fn impossible_profile_exits_infeasible_with_reason() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("bad.toml");
    std::fs::write(
        &f,
        "shape = \"profile\"\n[profile]\nangles_deg = [0.0, 180.0]\nnormal_g = [0.9, 0.9]\n",
    )
    .unwrap();
    let out = dir.path().join("out");
    let code = loopwright::cli::main_with_args([
        "loopwright",
        "design",
        f.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, loopwright::cli::EXIT_INFEASIBLE);
    // Contradictory tables are usage errors (exit 2) naming the field.
    std::fs::write(
        &f,
        "shape = \"profile\"\n[profile]\nangles_deg = [10.0, 180.0]\nnormal_g = [3.0, 1.0]\n",
    )
    .unwrap();
    let code = loopwright::cli::main_with_args([
        "loopwright",
        "design",
        f.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, loopwright::cli::EXIT_USAGE);
    let e = BriefInput::from_toml(
        "shape = \"profile\"\n[profile]\nangles_deg = [0.0, 90.0, 180.0]\nnormal_g = [3.0, f64::NAN]\n",
    );
    assert!(e.is_err());
    let e = BriefInput::from_toml("shape = \"profile\"\n[profile]\nangles_deg = [0.0, 90.0, 180.0]\nnormal_g = [3.0, nan, 1.0]\n").unwrap().resolve().unwrap_err();
    assert!(
        e.to_string().contains("profile.normal_g") && e.to_string().contains("not a finite number"),
        "{e}"
    );
}

/// Tuning: the optimiser adjusts the control loads for the tallest loop within the limits; the
/// result must meet every limit at 4x sampling and be taller than the loop of the loads as written
/// (which also meets them: the written loads are a feasible start). A target height is met.
#[test]
fn tuned_profile_is_taller_and_meets_the_limits() {
    let extra = "max_onset_g_s = 8.0\n[profile]\nangles_deg = [0.0, 60.0, 120.0, 180.0]\nnormal_g = [3.2, 3.0, 1.5, 0.8]\ntransition_deg = 25.0\n";
    let mut b = profile_brief(extra);
    b.max_g = 4.0;
    b.min_top_g = 0.3;
    let as_written =
        design_family(&b, ShapeKind::Profile).expect("the written loads meet the limits");
    b.profile.as_mut().unwrap().tune = true;
    let tuned = design_family(&b, ShapeKind::Profile).expect("tuning keeps the limits");
    let s = tuned.verification.summary;
    eprintln!(
        "as written {:.3} m, tuned {:.3} m, peak {:.3} g, top {:.3} g",
        as_written.best.summary.loop_height_m, s.loop_height_m, s.peak_normal_g, s.top_normal_g
    );
    assert!(s.peak_normal_g <= 4.0 && s.top_normal_g >= 0.3 && s.peak_onset_g_s <= 8.0);
    assert!(s.loop_height_m > as_written.best.summary.loop_height_m + 0.1);
    // A target height 1 m under the tallest: the common load offset makes it exact (to the 1 mm
    // the bisection accepts).
    let target = s.loop_height_m - 1.0;
    b.objective = loopwright::brief::Objective::Height { height_m: target };
    let h =
        design_family(&b, ShapeKind::Profile).expect("a loop under the tallest is within reach");
    let s = h.verification.summary;
    eprintln!(
        "target height {target:.3} m: {:.4} m, peak {:.3} g",
        s.loop_height_m, s.peak_normal_g
    );
    assert!(
        (s.loop_height_m - target).abs() < 1e-3,
        "{}",
        s.loop_height_m
    );
    assert!(s.peak_normal_g <= 4.0 && s.top_normal_g >= 0.3 && s.peak_onset_g_s <= 8.0);
}
