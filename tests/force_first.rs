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
use loopwright::dynamics::{Conditions, simulate};
use loopwright::geometry::Centreline;
use loopwright::optimiser::{design_family, family_for, ride_context};
use loopwright::shape::{Profile, RideContext, ShapeFamily};
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
    let b = profile_brief("[profile]\nangles_deg = [0.0, 180.0]\nnormal_g = [3.0, 3.0]\ntransition_deg = 0.0\n");
    let fam = family_for(&b, ShapeKind::Profile);
    let profile = fam.curvature_with_leads(&[n, n], 1.0, 0.0).unwrap();
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
        rows.push_str(&format!("{th:.15},{:.12},{:.12}\n", st.heartline_m.x, st.heartline_m.z));
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
    assert!(out.contains("worst"), "{out}");
}
