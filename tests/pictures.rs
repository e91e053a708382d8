//! Issue 10, "pictures and figures that say what is true": monotone force-first targets, trains
//! drawn per car, compare showing a failing family's figures, and the pictures' labels.

mod common;

use loopwright::brief::{BriefInput, ShapeKind};
use loopwright::numeric::{PiecewiseCubic, pchip};
use loopwright::shape::LoadProfile;
use std::f64::consts::PI;

fn join(v: &[f64]) -> String {
    v.iter()
        .map(|x| format!("{x:.17e}"))
        .collect::<Vec<_>>()
        .join(",")
}

/// `numeric::pchip` against scipy's PchipInterpolator (PyPI), an independent implementation of
/// Fritsch & Carlson, SIAM J. Numer. Anal. 17 (1980) 238–246: data with a flat stretch, a sign
/// change of the secants, uneven knots and a steep end (the end-slope limiter), and two knots.
#[test]
fn pchip_matches_scipy() {
    let sets: [(&[f64], &[f64]); 3] = [
        (
            &[0.0, 0.4, 1.1, 1.5, 2.6, 3.0, 4.2],
            &[1.0, -0.5, 0.8, 0.8, 0.3, -1.1, 0.6],
        ),
        (&[0.0, 0.1, 1.0, 3.0], &[0.0, 5.0, 5.5, 0.2]),
        (&[-1.0, 2.0], &[3.0, -1.0]),
    ];
    for (knots, values) in sets {
        let s = PiecewiseCubic::new(knots.to_vec(), pchip(knots, values));
        let (a, b) = (knots[0], knots[knots.len() - 1]);
        let grid: String = (0..=120)
            .map(|i| {
                let t = a + (b - a) * i as f64 / 120.0;
                format!("{t:.17e} {:.17e}\n", s.value(t))
            })
            .collect();
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("grid.txt");
        std::fs::write(&f, grid).unwrap();
        let out = common::python(
            "pchip_check.py",
            &[&f],
            &[&join(knots), &join(values), "1e-12"],
        );
        eprintln!("{out}");
    }
}

/// The profile brief (examples/profile-brief.toml): control loads 3.6, 3.4, 2.0, 0.9, 0.5 g. A
/// monotone interpolant (Fritsch & Carlson 1980) stays within the largest and smallest control
/// value; the natural cubic it replaces peaked at 3.630 g (issue 10).
#[test]
fn profile_target_never_overshoots_its_control_loads() {
    let text = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/profile-brief.toml"),
    )
    .unwrap();
    let b = BriefInput::from_toml(&text).unwrap().resolve().unwrap();
    assert_eq!(b.shape, ShapeKind::Profile);
    let spec = b.profile.clone().unwrap();
    let loads = [3.6, 3.4, 2.0, 0.9, 0.5];
    let target = LoadProfile::new(spec).target(&loads);
    let (mut hi, mut lo) = (f64::MIN, f64::MAX);
    for i in 0..=20_000 {
        let th = 2.0 * PI * i as f64 / 20_000.0;
        let n = target.normal_g(th);
        hi = hi.max(n);
        lo = lo.min(n);
    }
    eprintln!("target between {lo:.6} and {hi:.6} g");
    assert!(hi <= 3.6 + 1e-12, "overshoot: peak {hi} g");
    assert!(lo >= 0.5 - 1e-12, "undershoot: least {lo} g");
    // It still interpolates: 2.0 g at 90°, 0.5 g at the top.
    assert!((target.normal_g(PI / 2.0) - 2.0).abs() < 1e-12);
    assert!((target.normal_g(PI) - 0.5).abs() < 1e-12);
}

/// The demo brief without losses, onset limit or lateral shift, so that the circle's closed form
/// applies (as in tests/compare_sweep.rs).
fn lossless(max_g: f64) -> loopwright::brief::Brief {
    BriefInput::from_toml(&format!(
        "name = \"study\"\nentry_speed = 25.0\nmax_g = {max_g}\nmin_top_g = 0.2\nrolling_resistance = 0.0\n\
         drag_area_m2 = 0.0\nspacing_m = 0.1\nlateral_shift_m = 0.0\n"
    ))
    .unwrap()
    .resolve()
    .unwrap()
}

/// Compare shows a failing family's figures: the circle under 4.5 g is sized at the largest size
/// meeting the top-load limit, where the lossless closed form of vertical circular motion
/// (Halliday, Resnick & Walker, "Fundamentals of Physics", ch. 6 and 8: n_top = v²/(gR) − 5,
/// n_bottom = v²/(gR) + 1) gives n_top = 0.2 g, R = v²/(5.2 g), n_bottom = 6 + n_top = 6.2 g.
/// The table marks the failing value, CSV and JSON carry the figures and what fails, and the
/// overlays draw it dashed, labelled failing.
#[test]
fn compare_shows_the_failing_circle_at_its_top_load_limit() {
    use loopwright::compare::compare;
    use loopwright::export::{overlay, study};
    use loopwright::units::STANDARD_GRAVITY_M_S2 as G;
    let b = lossless(4.5);
    let c = compare(&b, &[ShapeKind::Circle, ShapeKind::Clothoid]);
    let circle = &c.entries[0];
    assert!(circle.result.is_err());
    let f = circle.shown_figures().expect("the failing circle is shown");
    // Sized at the top-load limit plus the design margin m: n_top = 0.2 + m, R = v²/(g(5 + n_top)).
    let n_top = 0.2 + loopwright::checks::limits::DESIGN_MARGIN.load_g;
    let r = 25.0f64.powi(2) / (G * (5.0 + n_top));
    eprintln!("circle shown: {f:?}");
    assert!((f.top_normal_g - n_top).abs() < 2e-3, "{}", f.top_normal_g);
    assert!(
        (f.peak_normal_g - (6.0 + f.top_normal_g)).abs() < 2e-3,
        "{}",
        f.peak_normal_g
    );
    assert!((f.top_radius_m - r).abs() < 0.01 * r, "{}", f.top_radius_m);
    assert!((f.loop_height_m - 2.0 * r).abs() < 0.01 * 2.0 * r);
    let clothoid = c.entries[1].shown_figures().unwrap();
    assert!(clothoid.peak_normal_g < 4.5);

    let table = loopwright::report::compare_table(&c);
    let peak_row = table
        .lines()
        .find(|l| l.contains("peak normal load"))
        .unwrap();
    assert!(
        peak_row.contains(&format!("{:.3} FAIL", f.peak_normal_g)),
        "{peak_row}"
    );
    assert!(table.contains("largest size meeting min_top_g"), "{table}");
    assert!(table.contains("6 + n_top"), "{table}");

    let csv = String::from_utf8(study::compare_csv(&c).unwrap()).unwrap();
    let mut rd = csv::Reader::from_reader(csv.as_bytes());
    let head = rd.headers().unwrap().clone();
    let col = |n: &str| head.iter().position(|h| h == n).unwrap();
    let row = rd.records().next().unwrap().unwrap();
    assert_eq!(&row[col("feasible")], "no");
    assert_eq!(row[col("peak_normal_g")], study::fixed(f.peak_normal_g));
    assert!(row[col("fails")].split(';').any(|x| x == "max_g"));
    assert!(row[col("reason")].contains("6 + n_top"));
    let json: serde_json::Value =
        serde_json::from_slice(&study::compare_json(&c).unwrap()).unwrap();
    let j = &json["families"][0];
    assert_eq!(j["feasible"], false);
    assert_eq!(
        j["figures"]["peak_normal_g"].as_f64(),
        Some(f.peak_normal_g)
    );
    assert!(j["fails"].as_array().unwrap().iter().any(|x| x == "max_g"));

    for svg in [
        overlay::elevation_overlay_svg(&c),
        overlay::loads_overlay_svg(&c),
    ] {
        let failing: Vec<&str> = svg
            .split("<path")
            .skip(1)
            .filter(|p| p.contains("class=\"failing\""))
            .collect();
        assert_eq!(failing.len(), 1, "one failing curve drawn");
        assert!(!failing[0].contains("stroke-dasharray=\"none\""), "dashed");
        assert!(svg.contains("circle FAILS:"), "legend says it fails");
    }
}

/// A 7-car train's loads plot draws the front, middle and rear car and the range of all cars,
/// each in the legend, and puts the top-load marker on the curve of the car with the least top
/// load (the figure the report quotes). The JSON names the per-car CSV beside the front-car table.
/// Reference: the plot's own data (the car rides), read back from the SVG.
#[test]
fn train_loads_plot_shows_front_middle_rear_and_the_range() {
    use loopwright::export::{json, plot};
    let mut b = lossless(6.0);
    b.cars = 7;
    b.car_pitch_m = 2.4;
    b.spacing_m = 0.2;
    let d = loopwright::optimiser::design_family(&b, ShapeKind::Clothoid).unwrap();
    let svg = plot::loads_svg(&d);
    for (car, role) in [(0, "front"), (3, "middle"), (6, "rear")] {
        assert!(
            svg.contains(&format!("id=\"normal-g-car-{car}\"")),
            "{role}"
        );
        assert!(
            svg.contains(&format!("normal g, {role} car (car {})", car + 1)),
            "{role}"
        );
    }
    assert!(svg.contains("id=\"normal-g-range\"") && svg.contains("range of all 7 cars"));
    let worst = d
        .best
        .cars
        .iter()
        .min_by(|a, b| a.top_normal_g.total_cmp(&b.top_normal_g))
        .unwrap();
    assert!(
        svg.contains(&format!("data-car=\"{}\"", worst.car)),
        "marker car"
    );
    // The marker's height is that car's top load on the plot's own scale: compare it with the
    // car's curve point at the top station.
    let marker = svg.split("id=\"top-marker\"").next().unwrap();
    let attr = |tag: &str, name: &str| -> f64 {
        tag.rsplit(&format!(" {name}=\""))
            .next()
            .unwrap()
            .split('"')
            .next()
            .unwrap()
            .parse()
            .unwrap()
    };
    let (cx, cy) = (attr(marker, "cx"), attr(marker, "cy"));
    // The whole tag of that car's curve (attributes are written in name order).
    let id = format!("id=\"normal-g-car-{}\"", worst.car);
    let at = svg.find(&id).unwrap();
    let start = svg[..at].rfind('<').unwrap();
    let tag = &svg[start..start + svg[start..].find('>').unwrap()];
    let pts = tag
        .split("points=\"")
        .nth(1)
        .unwrap()
        .split('"')
        .next()
        .unwrap();
    let y_on_curve = pts
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse::<f64>().unwrap(), y.parse::<f64>().unwrap())
        })
        .min_by(|a, b| (a.0 - cx).abs().total_cmp(&(b.0 - cx).abs()))
        .unwrap()
        .1;
    assert!((cy - y_on_curve).abs() < 0.02, "{cx},{cy} vs {y_on_curve}");
    let j: serde_json::Value = serde_json::from_slice(&json::report_json(&d).unwrap()).unwrap();
    assert_eq!(j["cars_csv"], "study-cars.csv");
    assert!(j["loads_csv_rows"].as_str().unwrap().contains("front car"));
}

/// The sweep picture gives no legend entry to a curve it does not draw: under 4.5 g no lossless
/// circle is feasible (it needs 6 + n_top g, Halliday/Resnick/Walker), so "circle, max 4.50 g"
/// must not be in the legend, while the 7 g circle is drawn and listed.
#[test]
fn sweep_legend_lists_only_drawn_curves() {
    use loopwright::export::overlay;
    use loopwright::sweep::{self, SweepInput, SweepSpec};
    let base = BriefInput::from_toml(
        "name = \"study\"\nentry_speed = 25.0\nmax_g = 4.5\nmin_top_g = 0.2\nrolling_resistance = 0.0\n\
         drag_area_m2 = 0.0\nspacing_m = 0.5\nlateral_shift_m = 0.0\n",
    )
    .unwrap();
    let s = SweepInput {
        entry_speed: Some(sweep::AxisText::Text("24..26:2".into())),
        max_g: Some(sweep::AxisText::Text("4.5..7:2".into())),
        min_top_g: None,
        shapes: Some(vec!["circle".into()]),
    };
    let spec = SweepSpec::new(base, &s).unwrap();
    let rows = sweep::run(&spec, None, &|| {});
    let svg = overlay::sweep_summary_svg(&rows, "t", loopwright::brief::Objective::Tallest);
    assert!(!svg.contains("circle, max 4.50 g"), "undrawn curve listed");
    assert!(svg.contains("circle, max 7.00 g"));
    // The note (wrapped at 30 characters) says which curve was left out.
    assert!(svg.contains("not drawn (no feasible") && svg.contains("circle at 4.50 g"));
}
