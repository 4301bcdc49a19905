//! Min/max decimation over path distance, in bounded memory.
//!
//! A fixed number of buckets over s, each keeping the smallest and the largest value of every
//! series (and where they occur). The length of the path is not known while it is walked, so
//! the bucket width starts small and doubles when the buckets run out, merging neighbouring
//! pairs; extremes survive every merge.

/// The extremes of one series within one bucket (display units; s in m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bucket {
    /// Smallest value in the bucket; +∞ while it is empty.
    pub lo: f64,
    /// Where `lo` occurs: path distance (m), or time (s) in an envelope over time.
    pub s_lo: f64,
    /// Largest value in the bucket; −∞ while it is empty.
    pub hi: f64,
    /// Where `hi` occurs, like `s_lo`.
    pub s_hi: f64,
}

impl Bucket {
    const EMPTY: Bucket = Bucket {
        lo: f64::INFINITY,
        s_lo: 0.0,
        hi: f64::NEG_INFINITY,
        s_hi: 0.0,
    };

    /// True when no finite value has fallen into the bucket.
    pub fn is_empty(&self) -> bool {
        self.lo > self.hi
    }

    fn add(&mut self, s: f64, v: f64) {
        if v < self.lo {
            self.lo = v;
            self.s_lo = s;
        }
        if v > self.hi {
            self.hi = v;
            self.s_hi = s;
        }
    }

    fn merge(a: Bucket, b: Bucket) -> Bucket {
        let mut m = a;
        if b.lo < m.lo {
            m.lo = b.lo;
            m.s_lo = b.s_lo;
        }
        if b.hi > m.hi {
            m.hi = b.hi;
            m.s_hi = b.s_hi;
        }
        m
    }
}

/// Min/max decimation of several series sharing one grid over path distance s.
#[derive(Debug, Clone)]
pub struct Envelope {
    series: usize,
    cap: usize,
    /// Bucket width (m); bucket i covers [i·width, (i+1)·width).
    width: f64,
    /// Series-major: bucket i of series k is `buckets[k * cap + i]`.
    buckets: Vec<Bucket>,
    /// Per bucket: an unreachable sample fell into it.
    unreachable: Vec<bool>,
    /// One past the highest bucket used.
    used: usize,
}

impl Envelope {
    /// `cap` buckets (rounded up to an even number, at least 2) of `width` m to start with.
    pub fn new(series: usize, cap: usize, width: f64) -> Self {
        let cap = (cap.max(2) + 1) & !1;
        let width = if width.is_finite() && width > 0.0 {
            width
        } else {
            1e-3
        };
        Envelope {
            series,
            cap,
            width,
            buckets: vec![Bucket::EMPTY; series * cap],
            unreachable: vec![false; cap],
            used: 0,
        }
    }

    /// The bucket for distance `s` (m, ≥ 0), widening the buckets until it fits.
    pub fn slot(&mut self, s: f64) -> usize {
        let s = s.max(0.0);
        loop {
            let i = (s / self.width).floor();
            if i < self.cap as f64 {
                let i = i as usize;
                self.used = self.used.max(i + 1);
                return i;
            }
            self.merge_pairs();
        }
    }

    /// Double the bucket width: bucket i becomes buckets 2i and 2i+1 merged.
    fn merge_pairs(&mut self) {
        let half = self.cap / 2;
        for k in 0..self.series {
            let b = &mut self.buckets[k * self.cap..(k + 1) * self.cap];
            for i in 0..half {
                b[i] = Bucket::merge(b[2 * i], b[2 * i + 1]);
            }
            b[half..].fill(Bucket::EMPTY);
        }
        for i in 0..half {
            self.unreachable[i] = self.unreachable[2 * i] || self.unreachable[2 * i + 1];
        }
        self.unreachable[half..].fill(false);
        self.used = self.used.div_ceil(2);
        self.width *= 2.0;
    }

    /// Add value `v` of series `k` at distance `s` into bucket `slot` (from [`Envelope::slot`]).
    /// Non-finite values are left out.
    pub fn add(&mut self, slot: usize, k: usize, s: f64, v: f64) {
        if v.is_finite() && k < self.series {
            self.buckets[k * self.cap + slot].add(s, v);
        }
    }

    /// Records that an unreachable sample fell into bucket `slot` (from [`Envelope::slot`]), so
    /// the plots can show the gap.
    pub fn mark_unreachable(&mut self, slot: usize) {
        self.unreachable[slot] = true;
    }

    /// Bucket width (m).
    pub fn width(&self) -> f64 {
        self.width
    }

    /// Buckets in use (≤ the cap).
    pub fn used(&self) -> usize {
        self.used
    }

    /// The buckets in use of series `k` (none for a series that does not exist).
    pub fn buckets(&self, k: usize) -> &[Bucket] {
        if k >= self.series {
            return &[];
        }
        &self.buckets[k * self.cap..k * self.cap + self.used]
    }

    /// The series as polylines in s order (s in m): each bucket gives its extremes in the
    /// order they occurred; an empty bucket breaks the line.
    pub fn runs(&self, k: usize) -> Vec<Vec<(f64, f64)>> {
        let mut runs = Vec::new();
        let mut cur: Vec<(f64, f64)> = Vec::new();
        for b in self.buckets(k) {
            if b.is_empty() {
                if !cur.is_empty() {
                    runs.push(std::mem::take(&mut cur));
                }
                continue;
            }
            let (a, z) = if b.s_lo <= b.s_hi {
                ((b.s_lo, b.lo), (b.s_hi, b.hi))
            } else {
                ((b.s_hi, b.hi), (b.s_lo, b.lo))
            };
            cur.push(a);
            if z != a {
                cur.push(z);
            }
        }
        if !cur.is_empty() {
            runs.push(cur);
        }
        runs
    }

    /// Stretches [s0, s1] (m) of buckets holding unreachable samples, neighbours joined.
    pub fn unreachable_stretches(&self) -> Vec<[f64; 2]> {
        let mut out: Vec<[f64; 2]> = Vec::new();
        for (i, &u) in self.unreachable[..self.used].iter().enumerate() {
            if !u {
                continue;
            }
            let (a, b) = (i as f64 * self.width, (i + 1) as f64 * self.width);
            match out.last_mut() {
                Some(last) if (last[1] - a).abs() < 1e-12 => last[1] = b,
                _ => out.push([a, b]),
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_spike_survives_any_number_of_merges() {
        // source: common practice (min/max decimation keeps every extreme of the raw series)
        let mut e = Envelope::new(1, 100, 1e-4);
        let n = 1_000_000;
        for i in 0..n {
            let s = i as f64 * 1e-4;
            let v = if i == 654_321 {
                50.0
            } else if i == 123_457 {
                -7.0
            } else {
                (i as f64 * 1e-3).sin()
            };
            let slot = e.slot(s);
            e.add(slot, 0, s, v);
        }
        assert!(e.used() <= 100, "{} buckets", e.used());
        assert!(e.used() >= 50);
        let b = e.buckets(0);
        let hi = b.iter().map(|b| b.hi).fold(f64::MIN, f64::max);
        let lo = b.iter().map(|b| b.lo).fold(f64::MAX, f64::min);
        assert_eq!(hi, 50.0);
        assert_eq!(lo, -7.0);
        // The spike keeps its place: 654,321 × 0.1 mm.
        let at = b.iter().find(|b| b.hi == 50.0).unwrap().s_hi;
        assert!((at - 65.4321).abs() < 1e-9, "{at}");
        // Drawn runs carry both extremes, in s order.
        let runs = e.runs(0);
        assert_eq!(runs.len(), 1);
        assert!(runs[0].windows(2).all(|w| w[0].0 <= w[1].0));
        assert!(runs[0].iter().any(|p| p.1 == 50.0));
    }

    #[test]
    fn buckets_stay_bounded_and_gaps_break_lines() {
        // source: common practice (an empty bucket means no plotted sample: the line breaks)
        let mut e = Envelope::new(2, 11, 1.0);
        assert_eq!(e.cap, 12, "rounded up to an even count");
        for i in 0..40 {
            let s = i as f64;
            let slot = e.slot(s);
            if (10..20).contains(&i) {
                e.mark_unreachable(slot);
            } else {
                e.add(slot, 1, s, 1.0);
            }
        }
        // 40 m over at most 12 buckets: width 4 m (1 → 2 → 4), 10 buckets in use.
        assert_eq!(e.width(), 4.0);
        assert_eq!(e.used(), 10);
        assert!(e.runs(0).is_empty(), "series 0 got no values");
        assert_eq!(e.runs(1).len(), 2, "{:?}", e.runs(1));
        assert_eq!(e.unreachable_stretches(), vec![[8.0, 20.0]]);
    }

    #[test]
    fn non_finite_values_are_left_out() {
        // source: common practice (NaN would poison min/max comparisons)
        let mut e = Envelope::new(1, 4, 1.0);
        let slot = e.slot(0.5);
        e.add(slot, 0, 0.5, f64::NAN);
        e.add(slot, 0, 0.5, f64::INFINITY);
        assert!(e.buckets(0)[0].is_empty());
        e.add(slot, 0, 0.5, 2.0);
        assert_eq!(e.buckets(0)[0].lo, 2.0);
    }
}
