//! Property-test stand-ins for the cargo-fuzz targets `merge`, `limits_table` and `sweep_file`
//! (fuzz/), run with every `cargo test`: random bytes and random damage never panic, and a shard
//! damaged anywhere is refused or merges to exactly the original table (a change that leaves every
//! field as it was, such as quoting a plain field, is not damage).

use loopwright::brief::limits_table::EnvelopeTable;
use loopwright::export::study::{merge_sweep_csv, sweep_csv};
use loopwright::sweep::{MAX_DESIGNS, SweepInput, SweepSpec, parse_sweep_file, run};
use proptest::prelude::*;
use std::sync::OnceLock;

/// Two shards of a small real sweep (circle and clothoid at two speeds, coarse spacing).
type Shards = (Vec<(String, Vec<u8>)>, Vec<u8>);

fn shards() -> &'static Shards {
    static SHARDS: OnceLock<Shards> = OnceLock::new();
    SHARDS.get_or_init(|| {
        let (mut brief, _) = parse_sweep_file("spacing_m = 0.5").unwrap();
        brief.spacing_m = Some(0.5);
        let sweep = SweepInput {
            entry_speed: Some(loopwright::sweep::AxisText::Text("22..28:2".into())),
            shapes: Some(vec!["circle".into(), "clothoid".into()]),
            ..SweepInput::default()
        };
        let spec = SweepSpec::new(brief, &sweep).unwrap();
        let all = run(&spec, None, &|| {});
        let whole = sweep_csv(&all, spec.len(), &spec.id()).unwrap();
        let part = |n: usize| {
            let rows: Vec<_> = all
                .iter()
                .filter(|r| r.point.index % 2 == n)
                .cloned()
                .collect();
            sweep_csv(&rows, spec.len(), &spec.id()).unwrap()
        };
        (
            vec![
                ("a.csv".to_string(), part(0)),
                ("b.csv".to_string(), part(1)),
            ],
            whole,
        )
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 3000, ..ProptestConfig::default() })]

    #[test]
    fn merge_never_panics_on_any_bytes(a in proptest::collection::vec(any::<u8>(), 0..600),
                                       b in proptest::collection::vec(any::<u8>(), 0..600)) {
        let _ = merge_sweep_csv(&[("a".into(), a), ("b".into(), b)]);
    }

    #[test]
    fn a_damaged_shard_is_refused_or_merges_to_the_same_table(
        at in any::<prop::sample::Index>(), byte in any::<u8>(), cut in any::<bool>()) {
        let (good, whole) = shards();
        prop_assert_eq!(&merge_sweep_csv(good).unwrap(), whole);
        let mut bad = good.clone();
        let bytes = &mut bad[0].1;
        let i = at.index(bytes.len());
        if cut { bytes.truncate(i) } else { bytes[i] = byte }
        match merge_sweep_csv(&bad) {
            Ok(merged) => prop_assert_eq!(&merged, whole),
            Err(e) => prop_assert!(e.file == "a.csv" || e.file == "(all)", "{}", e),
        }
    }

    #[test]
    fn limits_tables_never_panic(text in "\\PC{0,300}") {
        let _ = EnvelopeTable::from_toml(&text);
    }

    #[test]
    fn limits_tables_from_toml_like_text_never_panic(
        text in "(\\[(normal|lateral|tangential)\\]\n|max_onset_g_s = -?[0-9e.]{1,6}\n|level = \\[\\{ duration_s = -?[0-9.e]{1,5}, max_g = -?[0-9.]{1,4}, min_g = -?[0-9.]{1,4} \\}\\]\n|illustrative = (true|false)\n){0,8}") {
        let _ = EnvelopeTable::from_toml(&text);
    }

    #[test]
    fn sweep_files_never_panic_and_grids_stay_bounded(
        text in "(max_g = -?[0-9.e]{1,5}\n|spacing_m = 0\\.[1-9]\n|\\[sweep\\]\n|entry_speed = \"[0-9]{1,3}\\.\\.[0-9]{1,3}:[0-9]{1,6}( km/h)?\"\n|max_g = \"[0-9]\\.\\.[0-9]{1,2}:[0-9]{1,5}\"\n|shapes = \\[\"(circle|clothoid|spline|hex)\"\\]\n|min_top_g = [a-z0-9\"]{1,4}\n){0,7}") {
        if let Ok((brief, sweep)) = parse_sweep_file(&text)
            && let Ok(spec) = SweepSpec::new(brief, &sweep)
        {
            prop_assert!(!spec.is_empty() && spec.len() <= MAX_DESIGNS);
        }
    }

    #[test]
    fn sweep_files_of_any_text_never_panic(text in "\\PC{0,300}") {
        let _ = parse_sweep_file(&text);
    }
}
