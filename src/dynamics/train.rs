//! Trains: N equal cars as a rigid chain; which car passes which station when, and where every
//! car is at that moment. The ride integrator (`ride.rs`) runs on this schedule.

use nalgebra::Vector3;

use super::Ride;
use super::ride::lift_of;
use crate::geometry::{Centreline, Station};

/// A train: `cars` equal cars, `car_pitch_m` apart along the heartline (car 0 leads).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Train {
    pub cars: usize,
    pub car_pitch_m: f64,
}

impl Train {
    /// One car: the point-mass model.
    pub fn single() -> Self {
        Train {
            cars: 1,
            car_pitch_m: 0.0,
        }
    }
    /// Heartline distance from the front car to the rear car, m.
    pub fn length_m(&self) -> f64 {
        self.cars.saturating_sub(1) as f64 * self.car_pitch_m
    }
    /// Index of the middle car (the front one of the two middle cars for even counts).
    pub fn middle(&self) -> usize {
        self.cars.saturating_sub(1) / 2
    }
}

/// Every car's ride: `cars[j]` holds car j's loads at each station (the moment it passes it).
#[derive(Debug, Clone, PartialEq)]
pub struct TrainRide {
    pub train: Train,
    pub cars: Vec<Ride>,
}

/// Where a car is: height, the rise of the heartline's unit tangent (sin θ), curvature vector
/// of the heartline there, and the lift there ([`lift_of`]; zero where the contact force is not
/// needed). Eight numbers, one cache line: the remembered places of a long train are read from
/// a table of megabytes, so the size of a place is the cost of reading it.
#[derive(Debug, Clone, Copy)]
#[repr(align(64))]
pub(super) struct CarPlace {
    pub z_m: f64,
    pub tangent_z: f64,
    pub kvec: Vector3<f64>,
    pub lift: Vector3<f64>,
}

impl CarPlace {
    /// With the lift worked out when the contact force is needed (`with_curvature`).
    fn new(z_m: f64, tangent: Vector3<f64>, kvec: Vector3<f64>, with_curvature: bool) -> Self {
        let lift = if with_curvature {
            lift_of(&tangent)
        } else {
            Vector3::zeros()
        };
        CarPlace {
            z_m,
            tangent_z: tangent.z,
            kvec,
            lift,
        }
    }
}

/// The path at any arc length: cubic Hermite height (dz/ds = T_z, error O(h⁴)) and linear tangent
/// and curvature between stations; a straight continuation beyond either end.
///
/// `cursor` is the car's moving position in the station list: the index of the first station
/// past the car, as a binary search would find it, moved from where the car was at its previous
/// place. Cars only move forward (back by an ulp at a curvature step at most), so this costs O(1)
/// per place instead of O(log stations). `with_curvature` false leaves `kvec` zero (a lossless
/// ride never reads it).
fn place_at(path: &Centreline, s: f64, cursor: &mut usize, with_curvature: bool) -> CarPlace {
    let st = &path.stations;
    let (first, last) = (&st[0], &st[st.len() - 1]);
    if s <= first.s_m {
        let z_m = first.heartline_m.z + first.tangent.z * (s - first.s_m);
        return CarPlace::new(z_m, first.tangent, Vector3::zeros(), with_curvature);
    }
    if s >= last.s_m {
        let z_m = last.heartline_m.z + last.tangent.z * (s - last.s_m);
        return CarPlace::new(z_m, last.tangent, Vector3::zeros(), with_curvature);
    }
    // The partition point of `s_m <= s` over the (non-decreasing) station arc lengths.
    let mut hi = (*cursor).min(st.len());
    while hi > 0 && st[hi - 1].s_m > s {
        hi -= 1;
    }
    while hi < st.len() && st[hi].s_m <= s {
        hi += 1;
    }
    *cursor = hi;
    let hi = hi.min(st.len() - 1);
    let (a, b) = (&st[hi - 1], &st[hi]);
    let h = b.s_m - a.s_m;
    if h <= 0.0 {
        let z_m = a.heartline_m.z;
        return CarPlace::new(z_m, a.tangent, a.curvature_vec_1_m, with_curvature);
    }
    let t = (s - a.s_m) / h;
    let (t2, t3) = (t * t, t * t * t);
    let z = (2.0 * t3 - 3.0 * t2 + 1.0) * a.heartline_m.z
        + (t3 - 2.0 * t2 + t) * h * a.tangent.z
        + (-2.0 * t3 + 3.0 * t2) * b.heartline_m.z
        + (t3 - t2) * h * b.tangent.z;
    let tangent = (a.tangent * (1.0 - t) + b.tangent * t).normalize();
    let kvec = if with_curvature {
        a.curvature_vec_1_m * (1.0 - t) + b.curvature_vec_1_m * t
    } else {
        Vector3::zeros()
    };
    CarPlace::new(z, tangent, kvec, with_curvature)
}

/// One step of the ride: car `car` passes station `station` while the lead car is at `s_lead_m`.
#[derive(Debug, Clone, Copy)]
pub(super) struct Entry {
    pub s_lead_m: f64,
    pub car: usize,
    pub station: usize,
}

/// Every (car, station) passing in the order they happen, for `cars` cars `pitch_m` apart. One car
/// gives the stations themselves, in order, with `s_lead_m` their own arc length.
pub(super) fn schedule(path: &Centreline, cars: usize, pitch_m: f64) -> Vec<Entry> {
    let st = &path.stations;
    if cars == 1 {
        // One car's running maximum never decreases, so the stable sort below keeps the stations
        // in order: skip the keys and the sort (the point mass runs hundreds of times per design).
        return (st.iter().enumerate())
            .map(|(station, s)| Entry {
                s_lead_m: s.s_m,
                car: 0,
                station,
            })
            .collect();
    }
    // Sorted by a running maximum of the position, so that each car keeps its stations in path
    // order even where rounding makes the two stations at a curvature step differ by an ulp.
    let mut keyed: Vec<(f64, Entry)> = Vec::with_capacity(st.len() * cars);
    for car in 0..cars {
        let mut run = f64::MIN;
        for (station, s) in st.iter().enumerate() {
            let s_lead_m = s.s_m + car as f64 * pitch_m;
            run = run.max(s_lead_m);
            keyed.push((
                run,
                Entry {
                    s_lead_m,
                    car,
                    station,
                },
            ));
        }
    }
    keyed.sort_by(|a, b| a.0.total_cmp(&b.0));
    keyed.into_iter().map(|(_, e)| e).collect()
}

/// Where every car of a train is, as the schedule runs: one slot and one moving position per
/// car. Empty for a lone car, which is read off its station.
///
/// With rolling resistance the loss rate needs every car's contact force at the speed of the
/// moment, so every car's place is worked out at every entry (cost ∝ entries × cars). Without it
/// the integrator needs only the means of height and tangent rise over the cars, and those slide:
/// at entry (station i, car j) the cars sit at σᵢ + m·p for m = j−N+1 … j, one place further on
/// than at (i, j−1). Each station keeps its running sums, so an entry costs two places (the one
/// gained ahead, the one dropped behind) and the whole ride grows with entries, not entries ×
/// cars. The sums differ from adding every car afresh only by rounding (≈ N ulp of the height).
pub(super) struct Tracker {
    buf: Vec<CarPlace>,
    cursors: Vec<usize>,
    with_curvature: bool,
    /// Sliding mode (no rolling resistance), else `None`.
    running: Option<Sliding>,
    /// With rolling resistance: the last place worked out for each station and car offset.
    memo: Memo,
}

/// Largest table of remembered places (about 20 MB at 76 bytes a place). A long train on a
/// finely sampled path would need stations × (2N − 1) of them (a 40-car demo design's
/// verification took the process from 92 MB to 157 MB); past this size every place is worked out
/// afresh, which gives the same bits (a place is reused only when its arc length has the same
/// bits), only slower.
const MEMO_MAX_ENTRIES: usize = 1 << 18;

/// The places remembered, one cell per station and car offset. At entry (station i, car j) car
/// k sits at σᵢ + (j − k)·p, so the same place recurs for every (j, k) with the same offset: up
/// to N times. Its arc length is worked out as (σᵢ + j·p) − k·p, which usually but not always
/// rounds the same way for each pair, so a place is reused only when its arc length has the
/// same bits: the reuse is exact.
///
/// Three arrays rather than one of cells: the keys are read for every car at every entry and
/// pack eight to a cache line, a place fills one line of its own, and the keys and positions
/// start as zeroed memory.
#[derive(Default)]
struct Memo {
    /// Per cell, the bits of the arc length its place is for, inverted (0, the inverse of a NaN
    /// no arithmetic makes: none yet).
    keys: Vec<u64>,
    places: Vec<CarPlace>,
    /// Per cell, the car's moving position after placing it there, plus one (0: off the path's
    /// ends, where [`place_at`] leaves it alone).
    cursors: Vec<u32>,
}

/// The sliding sums: per station, the car whose entry they are for (+1) and the sums of height
/// and tangent rise; and the moving positions of the places gained and dropped.
type Sliding = (Vec<(usize, f64, f64)>, usize, usize);

impl Tracker {
    /// For `cars` cars on `path`; `with_curvature` whether the cars' contact forces are needed
    /// (rolling resistance): then every car is placed at every entry, otherwise the means slide.
    pub(super) fn new(path: &Centreline, cars: usize, with_curvature: bool) -> Tracker {
        let unset = CarPlace::new(0.0, Vector3::zeros(), Vector3::zeros(), false);
        let n = if cars > 1 { cars } else { 0 };
        let running =
            (n > 0 && !with_curvature).then(|| (vec![(0, 0.0, 0.0); path.stations.len()], 0, 0));
        let entries = path.stations.len() * (2 * n).saturating_sub(1);
        // Positions fit in u32: the table (stations × offsets) holds at most 2^18 cells.
        let memo = if n > 0 && with_curvature && entries <= MEMO_MAX_ENTRIES {
            Memo {
                keys: vec![0; entries],
                places: vec![unset; entries],
                cursors: vec![0; entries],
            }
        } else {
            Memo::default()
        };
        Tracker {
            buf: vec![unset; n],
            cursors: vec![0; n],
            with_curvature,
            running,
            memo,
        }
    }

    /// Move the train to `entry`: the means over the cars of height and of the tangent's rise
    /// (sin θ). Afterwards [`Tracker::places`] gives every car's place (when worked out).
    pub(super) fn advance(&mut self, path: &Centreline, entry: &Entry, pitch_m: f64) -> (f64, f64) {
        let st = &path.stations[entry.station];
        if self.buf.is_empty() {
            // A lone car's mean is its own value.
            return (st.heartline_m.z, st.tangent.z);
        }
        let n = self.buf.len();
        if let Some((sums, ahead, behind)) = self.running.as_mut() {
            let slot = &mut sums[entry.station];
            if entry.car > 0 && slot.0 == entry.car {
                let gained = place_at(path, entry.s_lead_m, ahead, false);
                let dropped = place_at(path, entry.s_lead_m - n as f64 * pitch_m, behind, false);
                slot.1 += gained.z_m - dropped.z_m;
                slot.2 += gained.tangent_z - dropped.tangent_z;
                slot.0 = entry.car + 1;
                return (slot.1 / n as f64, slot.2 / n as f64);
            }
        }
        self.place_all(path, entry, pitch_m);
        let z = self.buf.iter().map(|c| c.z_m).sum::<f64>();
        let tz = self.buf.iter().map(|c| c.tangent_z).sum::<f64>();
        if let Some((sums, _, _)) = self.running.as_mut() {
            sums[entry.station] = (entry.car + 1, z, tz);
        }
        (z / n as f64, tz / n as f64)
    }

    /// Every car's place at `entry`; the car the entry names is exactly on its station.
    fn place_all(&mut self, path: &Centreline, entry: &Entry, pitch_m: f64) {
        let stations = &path.stations;
        let st = &stations[entry.station];
        let (ends_m, n) = (
            (stations[0].s_m, stations[stations.len() - 1].s_m),
            self.buf.len(),
        );
        let with_curvature = self.with_curvature;
        let memo = &mut self.memo;
        for (k, (slot, cursor)) in self.buf.iter_mut().zip(&mut self.cursors).enumerate() {
            if k == entry.car {
                *cursor = entry.station + 1;
                let (z_m, kvec) = (st.heartline_m.z, st.curvature_vec_1_m);
                *slot = CarPlace::new(z_m, st.tangent, kvec, with_curvature);
                continue;
            }
            let s = entry.s_lead_m - k as f64 * pitch_m;
            if memo.keys.is_empty() {
                *slot = place_at(path, s, cursor, with_curvature);
                continue;
            }
            // Offset-major: the places of one offset are met in path order, so each offset's
            // row is read front to back (the whole table would not stay in cache).
            let cell = ((n - 1 + entry.car) - k) * stations.len() + entry.station;
            let key = !s.to_bits();
            if memo.keys[cell] != key {
                let place = place_at(path, s, cursor, with_curvature);
                let on_path = s > ends_m.0 && s < ends_m.1;
                memo.keys[cell] = key;
                memo.places[cell] = place;
                memo.cursors[cell] = if on_path { *cursor as u32 + 1 } else { 0 };
            } else if memo.cursors[cell] > 0 {
                *cursor = memo.cursors[cell] as usize - 1;
            }
            *slot = memo.places[cell];
        }
    }

    /// Every car's place at the entry last passed to [`Tracker::advance`] (a lone car: its
    /// station). Only complete with rolling resistance; the loss rate reads it only then.
    pub(super) fn places<'a>(&'a self, path: &'a Centreline, entry: &Entry) -> Places<'a> {
        if self.buf.is_empty() {
            Places::Lone(&path.stations[entry.station])
        } else {
            Places::Train(&self.buf)
        }
    }
}

/// Where the cars are at one entry of the schedule.
pub(super) enum Places<'a> {
    /// The only car, on its station.
    Lone(&'a Station),
    /// Every car's place, front car first.
    Train(&'a [CarPlace]),
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::brief::ShapeKind;
    use crate::shape::family;

    fn clothoid_path() -> Centreline {
        let f = family(ShapeKind::Clothoid).unwrap();
        let p = f.curvature_with_leads(&[0.6], 8.0, 5.0).unwrap();
        Centreline::build_shifted(&p, 1.1, 0.05, 2.5)
    }

    // The moving position must find the same interval as a binary search (the partition point of
    // s_m <= s), wherever the previous place was: forward, backward, across curvature steps.
    #[test]
    fn moving_position_matches_binary_search() {
        let path = clothoid_path();
        let st = &path.stations;
        let end = st[st.len() - 1].s_m;
        let mut cursor = 0;
        // A walk forward in steps that do not divide the spacing, then jumps back and forth.
        let mut probes: Vec<f64> = (0..4000).map(|i| i as f64 * 0.0371).collect();
        probes.extend([50.0, 3.0, 77.7, 77.69, 0.01, end - 1e-9, 12.5]);
        probes.extend(st.iter().map(|s| s.s_m));
        for s in probes {
            let hi = st.partition_point(|p| p.s_m <= s).min(st.len() - 1);
            let got = place_at(&path, s, &mut cursor, true);
            let mut fresh = 0;
            let want = place_at(&path, s, &mut fresh, true);
            assert_eq!(got.z_m.to_bits(), want.z_m.to_bits(), "s = {s}");
            assert_eq!(got.kvec, want.kvec, "s = {s}");
            if s > st[0].s_m && s < end {
                assert_eq!(cursor.min(st.len() - 1), hi, "s = {s}");
            }
        }
    }

    // Remembered places must be exactly the places worked out afresh: every car at every entry,
    // to the bit (the golden outputs depend on it), for short and long trains.
    #[test]
    fn remembered_places_are_fresh_places() {
        let path = clothoid_path();
        for (cars, pitch) in [(2, 2.5), (12, 2.5), (40, 1.9)] {
            let entries = schedule(&path, cars, pitch);
            let mut tracker = Tracker::new(&path, cars, true);
            // Fresh places with their own moving positions (exact wherever they start, as the
            // test above shows).
            let mut cursors = vec![0; cars];
            for e in &entries {
                tracker.advance(&path, e, pitch);
                let Places::Train(buf) = tracker.places(&path, e) else {
                    panic!("a train has places");
                };
                for (k, got) in buf.iter().enumerate() {
                    if k == e.car {
                        continue;
                    }
                    let s = e.s_lead_m - k as f64 * pitch;
                    let want = place_at(&path, s, &mut cursors[k], true);
                    assert_eq!(
                        got.z_m.to_bits(),
                        want.z_m.to_bits(),
                        "{cars} cars, s = {s}"
                    );
                    assert_eq!((got.tangent_z, got.kvec), (want.tangent_z, want.kvec));
                    assert_eq!(got.lift, want.lift);
                }
            }
            let filled = tracker.memo.keys.iter().filter(|&&k| k != 0).count();
            assert!(filled > 0, "{cars} cars: nothing remembered");
        }
    }

    // Sliding sums (lossless) against every car placed afresh (as with rolling resistance): the
    // mean height and tangent rise of the same cars must agree to rounding at every entry.
    #[test]
    fn sliding_means_match_fresh_means() {
        let path = clothoid_path();
        for (cars, pitch) in [(2, 2.5), (12, 2.5), (40, 1.9)] {
            let entries = schedule(&path, cars, pitch);
            let mut sliding = Tracker::new(&path, cars, false);
            let mut fresh = Tracker::new(&path, cars, true);
            let mut worst = 0.0f64;
            for e in &entries {
                let (z1, t1) = sliding.advance(&path, e, pitch);
                let (z2, t2) = fresh.advance(&path, e, pitch);
                worst = worst.max((z1 - z2).abs()).max((t1 - t2).abs());
            }
            assert!(worst < 1e-11, "{cars} cars: worst difference {worst}");
        }
    }
}
