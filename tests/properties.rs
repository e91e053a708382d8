//! Property tests (proptest): no panic from any brief, and the optimiser never reports a design
//! that violates a limit — checked by an independent re-simulation written in this file.

use loopwright::brief::{Brief, BriefInput, ShapeKind, SpeedText};
use loopwright::model::Assessment;
use loopwright::optimiser::{design, design_family};
use loopwright::units::STANDARD_GRAVITY_M_S2 as G;
use proptest::prelude::*;

/// Independent re-simulation of a design from its curvature profile alone: RK4 in arc length on
/// (z, v²) with dz/ds = sin θ, d(v²)/ds = −2g sin θ − 2μ|a⊥| − k v², where θ(s) comes from the
/// profile's exact pitch and |a⊥| = |v²κ + g cos θ| in a planar loop (first principles). Returns
/// (peak normal g, normal g at the top, smallest v²) at step `ds`.
fn resimulate(d: &Assessment, ds: f64) -> (f64, f64, f64) {
    let b = &d.brief;
    let p = d
        .best
        .profile()
        .expect("a designed loop has curvature pieces");
    let (mu, k) = (
        b.rolling_resistance,
        b.air_density_kg_m3 * b.drag_area_m2 / b.mass_kg,
    );
    let n_of = |s: f64, u: f64| u * p.curvature_1_m(s) / G + p.pitch_rad(s).cos();
    let f = |s: f64, y: [f64; 2]| {
        let th = p.pitch_rad(s);
        [
            th.sin(),
            -2.0 * G * th.sin() - 2.0 * mu * G * n_of(s, y[1]).abs() - k * y[1],
        ]
    };
    let total = p.length_m();
    let steps = (total / ds).ceil() as usize;
    let h = total / steps as f64;
    let mut y = [0.0, b.entry_speed_m_s.powi(2)];
    let (mut peak, mut top, mut top_z, mut min_u) = (f64::MIN, 0.0, f64::MIN, f64::MAX);
    for i in 0..=steps {
        let s = i as f64 * h;
        // Evaluate just inside each side of the step so a curvature jump at s is seen from both sides.
        for s_eval in [s - 1e-9, s + 1e-9] {
            if (0.0..=total).contains(&s_eval) {
                peak = peak.max(n_of(s_eval, y[1]));
            }
        }
        if y[0] > top_z {
            top_z = y[0];
            top = n_of(s, y[1]);
        }
        min_u = min_u.min(y[1]);
        if i == steps {
            break;
        }
        let add = |a: [f64; 2], b: [f64; 2], c: f64| [a[0] + c * b[0], a[1] + c * b[1]];
        let k1 = f(s, y);
        let k2 = f(s + h / 2.0, add(y, k1, h / 2.0));
        let k3 = f(s + h / 2.0, add(y, k2, h / 2.0));
        let k4 = f(s + h, add(y, k3, h));
        y = [
            y[0] + h / 6.0 * (k1[0] + 2.0 * k2[0] + 2.0 * k3[0] + k4[0]),
            y[1] + h / 6.0 * (k1[1] + 2.0 * k2[1] + 2.0 * k3[1] + k4[1]),
        ];
    }
    (peak, top, min_u)
}

fn brief(v: f64, max_g: f64, min_top: f64, shape: ShapeKind, lossy: bool) -> Brief {
    let input = BriefInput {
        entry_speed: Some(SpeedText::Number(v)),
        max_g: Some(max_g),
        min_top_g: Some(min_top),
        shape: Some(shape.name().into()),
        rolling_resistance: Some(if lossy { 0.02 } else { 0.0 }),
        drag_area_m2: Some(if lossy { 1.2 } else { 0.0 }),
        spacing_m: Some(0.1),
        // The re-simulation here is of the planar loop.
        lateral_shift_m: Some(0.0),
        ..Default::default()
    };
    input.resolve().unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    /// Every feasible clothoid or circle design, re-simulated at 1/10 of its spacing by the code
    /// above, meets its peak and top limits (to the re-simulation's own accuracy, 2e-3 g).
    #[test]
    fn feasible_designs_meet_their_limits_when_resimulated(
        v in 14.0f64..40.0, max_g in 3.0f64..8.0, min_top in -0.3f64..1.2, circle in any::<bool>(), lossy in any::<bool>()
    ) {
        prop_assume!(min_top < max_g - 0.5);
        let kind = if circle { ShapeKind::Circle } else { ShapeKind::Clothoid };
        let b = brief(v, max_g, min_top, kind, lossy);
        if let Ok(d) = design(&b) {
            let (peak, top, min_u) = resimulate(&d, d.best.spacing_m / 10.0);
            prop_assert!(min_u > 0.0);
            // The two simulations agree (so the limit checks below are not vacuous).
            prop_assert!((peak - d.best.summary.peak_normal_g).abs() < 5e-3, "peak {} vs {}", peak, d.best.summary.peak_normal_g);
            prop_assert!((top - d.best.summary.top_normal_g).abs() < 5e-3, "top {} vs {}", top, d.best.summary.top_normal_g);
            prop_assert!(peak <= b.max_g + 2e-3, "peak {} > {}", peak, b.max_g);
            prop_assert!(top >= b.min_top_g - 2e-3, "top {} < {}", top, b.min_top_g);
            prop_assert!(d.best.summary.min_radius_m >= b.min_radius_m - 1e-9);
        }
    }

    /// Lossless circle, closed form (vertical circular motion): the tallest circle with top load
    /// n_top has bottom load n_top + 6, so it is feasible exactly when max_g ≥ 6 + min_top_g.
    /// (Speeds ≥ 18 m/s keep R = v²/(g(5 + n_top)) above the default 4 m minimum radius.)
    #[test]
    fn circle_feasibility_follows_six_plus_n_top(v in 18.0f64..40.0, min_top in 0.0f64..1.5, gap in 0.05f64..1.5, above in any::<bool>()) {
        let max_g = if above { 6.0 + min_top + gap } else { 6.0 + min_top - gap };
        let b = brief(v, max_g, min_top, ShapeKind::Circle, false);
        let r = design_family(&b, ShapeKind::Circle);
        prop_assert_eq!(r.is_ok(), above, "v {} n_top {} max_g {}: {:?}", v, min_top, max_g, r.as_ref().err());
        if let Ok(d) = r {
            // The design keeps its design margin m inside both limits (0.05 ≤ gap > 2m).
            let m = loopwright::checks::limits::DESIGN_MARGIN.load_g;
            let radius = v * v / (G * (5.0 + min_top + m));
            prop_assert!((d.best.top_radius_m - radius).abs() / radius < 1e-4);
        }
    }

    /// No brief text, however odd, makes resolving panic; what resolves is finite and ordered.
    #[test]
    fn resolving_any_numbers_never_panics(
        v in proptest::num::f64::ANY, g in proptest::num::f64::ANY, t in proptest::num::f64::ANY,
        h in proptest::option::of(proptest::num::f64::ANY), sp in proptest::option::of(proptest::num::f64::ANY)
    ) {
        let input = BriefInput {
            entry_speed: Some(SpeedText::Number(v)), max_g: Some(g), min_top_g: Some(t), height_m: h, spacing_m: sp,
            ..Default::default()
        };
        if let Ok(b) = input.resolve() {
            prop_assert!(b.entry_speed_m_s.is_finite() && b.entry_speed_m_s > 0.0);
            prop_assert!(b.min_top_g < b.max_g);
        }
    }

    /// Arbitrary text as a brief file never panics the parser.
    #[test]
    fn parsing_any_text_never_panics(text in ".{0,200}") {
        if let Ok(input) = BriefInput::from_toml(&text) {
            let _ = input.resolve();
        }
    }
}

/// Refining the sampling changes the peak load by less than 0.01 g (numerical convergence).
#[test]
fn results_converge_as_sampling_is_refined() {
    use loopwright::optimiser::evaluate;
    let b = Brief::demo();
    for kind in ShapeKind::ALL {
        let shape = loopwright::shape::family(kind).unwrap().default_shape();
        let coarse = evaluate(&b, kind, &shape, 8.0, 0.2).unwrap().summary;
        let fine = evaluate(&b, kind, &shape, 8.0, 0.025).unwrap().summary;
        assert!(
            (coarse.peak_normal_g - fine.peak_normal_g).abs() < 0.01,
            "{kind}"
        );
        assert!(
            (coarse.top_normal_g - fine.top_normal_g).abs() < 0.01,
            "{kind}"
        );
    }
}
