//! Waypoint names, kept compactly: the names a file gives sit end to end in one text with
//! one end offset per waypoint; a waypoint without a name has an empty slice there and is
//! shown as `wp<n>` (`n` its 1-based position), made when asked for. A path without any
//! names stores nothing per waypoint. The store is shared (`Arc`) between the job and the
//! report, which serialises it as the list of names without copying it.

use serde::ser::{Serialize, SerializeSeq, Serializer};
use std::borrow::Cow;
use std::sync::Arc;

/// The names of a job's waypoints, in path order. Cheap to clone (shared).
#[derive(Debug, Clone, Default)]
pub struct WaypointNames(Arc<Store>);

#[derive(Debug, Default)]
struct Store {
    /// Given names, end to end.
    text: String,
    /// End offset in `text` of waypoint `i`'s name; empty when no waypoint has a name.
    ends: Vec<u32>,
    /// Number of waypoints.
    count: usize,
}

impl WaypointNames {
    /// Number of waypoints named (given or generated).
    pub fn len(&self) -> usize {
        self.0.count
    }

    /// True when there are no waypoints.
    pub fn is_empty(&self) -> bool {
        self.0.count == 0
    }

    /// The name the file gave waypoint `i`, or `None` (no name given, or `i` out of range).
    pub fn given(&self, i: usize) -> Option<&str> {
        let s = &self.0;
        let end = *s.ends.get(i)? as usize;
        let start = if i == 0 { 0 } else { s.ends[i - 1] as usize };
        let name = s.text.get(start..end)?;
        (!name.is_empty()).then_some(name)
    }

    /// The name of waypoint `i`: the given one or `wp<i + 1>`; `None` past the last.
    pub fn get(&self, i: usize) -> Option<Cow<'_, str>> {
        if i >= self.0.count {
            return None;
        }
        Some(match self.given(i) {
            Some(n) => Cow::Borrowed(n),
            None => Cow::Owned(format!("wp{}", i + 1)),
        })
    }

    /// Every name in path order.
    pub fn iter(&self) -> impl Iterator<Item = Cow<'_, str>> + '_ {
        (0..self.0.count).filter_map(|i| self.get(i))
    }
}

impl Serialize for WaypointNames {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut seq = serializer.serialize_seq(Some(self.len()))?;
        for name in self.iter() {
            seq.serialize_element(name.as_ref())?;
        }
        seq.end()
    }
}

/// Collects names one waypoint at a time, then [`NamesBuilder::finish`]es into the shared store.
#[derive(Debug, Default)]
pub struct NamesBuilder {
    text: String,
    ends: Vec<u32>,
    count: usize,
}

impl NamesBuilder {
    /// An empty builder.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds the next waypoint's name (`None` or empty = no name given). Offsets are `u32`:
    /// names come from one input file of at most 512 MiB, or from a job built from one.
    pub fn push(&mut self, name: Option<&str>) {
        let name = name.unwrap_or("");
        if !name.is_empty() && self.ends.is_empty() {
            // First given name: the earlier waypoints get empty slices.
            self.ends.resize(self.count, 0);
        }
        if !self.ends.is_empty() || !name.is_empty() {
            self.text.push_str(name);
            let end = u32::try_from(self.text.len()).unwrap_or(u32::MAX);
            self.ends.push(end);
        }
        self.count += 1;
    }

    /// Number of waypoints pushed so far.
    pub fn len(&self) -> usize {
        self.count
    }

    /// True when nothing was pushed yet.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }

    /// The shared name store of the names pushed, in push order.
    pub fn finish(mut self) -> WaypointNames {
        self.text.shrink_to_fit();
        self.ends.shrink_to_fit();
        WaypointNames(Arc::new(Store {
            text: self.text,
            ends: self.ends,
            count: self.count,
        }))
    }
}

impl FromIterator<Option<String>> for WaypointNames {
    fn from_iter<I: IntoIterator<Item = Option<String>>>(iter: I) -> Self {
        let mut b = NamesBuilder::new();
        for n in iter {
            b.push(n.as_deref());
        }
        b.finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unnamed_waypoints_get_their_position_and_store_nothing() {
        // Default names are `wp` + the 1-based position. source: common practice (the
        // project's naming rule for unnamed waypoints)
        let mut b = NamesBuilder::new();
        for _ in 0..3 {
            b.push(None);
        }
        let n = b.finish();
        assert_eq!(n.iter().collect::<Vec<_>>(), ["wp1", "wp2", "wp3"]);
        assert!(n.0.ends.is_empty() && n.0.text.is_empty());
        assert!(n.get(3).is_none());
    }

    #[test]
    fn given_and_missing_names_mix_in_order() {
        // source: common practice (a missing name in a named file falls back to `wp<n>`)
        let mut b = NamesBuilder::new();
        b.push(None);
        b.push(Some("seam, start"));
        b.push(Some(""));
        b.push(Some("é"));
        let n = b.finish();
        assert_eq!(
            n.iter().collect::<Vec<_>>(),
            ["wp1", "seam, start", "wp3", "é"]
        );
        assert_eq!(n.given(0), None);
        assert_eq!(n.given(1), Some("seam, start"));
        assert_eq!(
            serde_json::to_string(&n).unwrap(),
            r#"["wp1","seam, start","wp3","é"]"#
        );
    }
}
