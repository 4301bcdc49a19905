//! [`Joints`]: one joint vector of a chain, on the stack.

use super::chain::MAX_DOF;
use std::ops::{Deref, DerefMut, Index, IndexMut};
use std::slice::SliceIndex;

/// Joint positions (rad for revolute joints, m for prismatic ones) or any other per-joint
/// quantity (speeds, steps), base to tip: up to [`MAX_DOF`] values in a fixed array, so that
/// it is `Copy`, never allocates and passes between modules as one value instead of an
/// array with a separate count. It reads as a slice of its `len` values (`Deref` to
/// `[f64]`); the entries beyond `len` are zero and never seen.
#[derive(Clone, Copy)]
pub struct Joints {
    len: usize,
    values: [f64; MAX_DOF],
}

impl Joints {
    /// `len` zeros. A `len` above [`MAX_DOF`] is cut to it: no chain has more joints (the
    /// loader refuses such a robot), so callers pass a robot's `dof`.
    #[inline]
    pub const fn zeros(len: usize) -> Joints {
        let len = if len > MAX_DOF { MAX_DOF } else { len };
        Joints {
            len,
            values: [0.0; MAX_DOF],
        }
    }

    /// The values of `values`, or `None` when there are more than [`MAX_DOF`].
    #[inline]
    pub fn from_slice(values: &[f64]) -> Option<Joints> {
        let mut q = Joints::zeros(values.len());
        if values.len() > MAX_DOF {
            return None;
        }
        q.values[..values.len()].copy_from_slice(values);
        Some(q)
    }

    /// The values as a slice (`len` entries).
    #[inline]
    pub fn as_slice(&self) -> &[f64] {
        &self.values[..self.len]
    }

    /// The values as a mutable slice (`len` entries).
    #[inline]
    pub fn as_mut_slice(&mut self) -> &mut [f64] {
        &mut self.values[..self.len]
    }

    /// Each value mapped by `f` with its index (same length).
    #[inline]
    pub fn map(&self, mut f: impl FnMut(usize, f64) -> f64) -> Joints {
        let mut out = Joints::zeros(self.len);
        for (i, (o, &v)) in out.values.iter_mut().zip(self.as_slice()).enumerate() {
            *o = f(i, v);
        }
        out
    }
}

impl Default for Joints {
    /// No joints.
    fn default() -> Self {
        Joints::zeros(0)
    }
}

impl<const N: usize> From<[f64; N]> for Joints {
    /// The values of a fixed-size array; an array longer than [`MAX_DOF`] does not compile.
    #[inline]
    fn from(values: [f64; N]) -> Joints {
        const { assert!(N <= MAX_DOF, "more joints than MAX_DOF") };
        let mut q = Joints::zeros(N);
        q.values[..N].copy_from_slice(&values);
        q
    }
}

impl Deref for Joints {
    type Target = [f64];
    #[inline]
    fn deref(&self) -> &[f64] {
        self.as_slice()
    }
}

impl DerefMut for Joints {
    #[inline]
    fn deref_mut(&mut self) -> &mut [f64] {
        self.as_mut_slice()
    }
}

impl<I: SliceIndex<[f64]>> Index<I> for Joints {
    type Output = I::Output;
    #[inline]
    fn index(&self, index: I) -> &I::Output {
        &self.as_slice()[index]
    }
}

impl<I: SliceIndex<[f64]>> IndexMut<I> for Joints {
    #[inline]
    fn index_mut(&mut self, index: I) -> &mut I::Output {
        &mut self.as_mut_slice()[index]
    }
}

impl<'a> IntoIterator for &'a Joints {
    type Item = &'a f64;
    type IntoIter = std::slice::Iter<'a, f64>;
    fn into_iter(self) -> Self::IntoIter {
        self.as_slice().iter()
    }
}

impl<'a> IntoIterator for &'a mut Joints {
    type Item = &'a mut f64;
    type IntoIter = std::slice::IterMut<'a, f64>;
    fn into_iter(self) -> Self::IntoIter {
        self.as_mut_slice().iter_mut()
    }
}

impl PartialEq for Joints {
    /// Equal lengths and equal values (the unused entries do not count).
    fn eq(&self, other: &Joints) -> bool {
        self.as_slice() == other.as_slice()
    }
}

impl std::fmt::Debug for Joints {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_list().entries(self.as_slice()).finish()
    }
}

impl serde::Serialize for Joints {
    /// A sequence of the `len` values.
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq(self.as_slice())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_joint_vector_reads_as_its_values_only() {
        // source: common practice (a slice view of the first `len` entries)
        let mut q = Joints::from([0.5, -1.0, 2.0]);
        assert_eq!(q.len(), 3);
        assert_eq!(&q[..], &[0.5, -1.0, 2.0]);
        assert_eq!(q[1], -1.0);
        q[2] = 3.0;
        assert_eq!(q.iter().sum::<f64>(), 2.5);
        for v in &mut q {
            *v *= 2.0;
        }
        assert_eq!(q, Joints::from([1.0, -2.0, 6.0]));
        assert_ne!(q, Joints::from([1.0, -2.0]));
        assert_eq!(format!("{q:?}"), "[1.0, -2.0, 6.0]");
        assert_eq!(q.map(|i, v| v + i as f64), Joints::from([1.0, -1.0, 8.0]));
        assert_eq!(Joints::zeros(2), Joints::from([0.0, 0.0]));
        assert!(Joints::default().is_empty());
    }

    #[test]
    fn too_many_values_are_refused_without_panicking() {
        // source: common practice (capacity MAX_DOF, see chain.rs)
        let long = [0.0; MAX_DOF + 1];
        assert_eq!(Joints::from_slice(&long), None);
        assert_eq!(
            Joints::from_slice(&long[..MAX_DOF]).map(|q| q.len()),
            Some(MAX_DOF)
        );
        assert_eq!(Joints::zeros(MAX_DOF + 5).len(), MAX_DOF);
    }

    #[test]
    fn a_joint_vector_serialises_as_a_sequence_of_its_values() {
        // source: serde_json 1 (a sequence of numbers is a JSON array)
        let q = Joints::from([1.5, -0.25]);
        assert_eq!(serde_json::to_string(&q).unwrap(), "[1.5,-0.25]");
    }

    #[test]
    fn a_joint_vector_is_small_and_copied() {
        // source: common practice (a count and MAX_DOF f64 values, 8 bytes each)
        assert_eq!(std::mem::size_of::<Joints>(), 8 * (MAX_DOF + 1));
    }
}
