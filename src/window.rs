//! A fixed-capacity rolling window with no panic path.
//!
//! Same behaviour as the subset of `heapless::HistoryBuffer` (0.8) the kernel
//! uses (`new`, `write`, `len`, `as_slice`, `oldest_ordered`, `recent`,
//! `clear`; `as_slice` in storage order, not chronological), but
//! `HistoryBuffer::write` indexes its array with a bounds check the optimiser
//! cannot remove, which leaves a panic path in every caller (found by the
//! link-time panic check of `ci/firmware`). Here every access goes through
//! `get`/`get_mut`.

/// The last `W` values written.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Window<T, const W: usize> {
    data: [T; W],
    /// Slot of the next write, always `< W`.
    next: usize,
    /// Values held, `<= W`.
    len: usize,
}

impl<T: Copy + Default, const W: usize> Default for Window<T, W> {
    fn default() -> Self {
        Window {
            data: [T::default(); W],
            next: 0,
            len: 0,
        }
    }
}

impl<T: Copy, const W: usize> Window<T, W> {
    /// An empty window whose unused slots hold `fill`.
    pub(crate) const fn filled_with(fill: T) -> Self {
        const { assert!(W > 0, "a window needs at least one slot") };
        Window {
            data: [fill; W],
            next: 0,
            len: 0,
        }
    }

    /// Writes a value, overwriting the oldest once full.
    #[inline]
    pub(crate) fn write(&mut self, v: T) {
        self.push(v);
    }

    /// Writes a value and returns the one it overwrote (the oldest) when the
    /// window was full.
    #[inline]
    pub(crate) fn push(&mut self, v: T) -> Option<T> {
        let full = self.len >= W;
        let next = Self::slot(self.next);
        let mut evicted = None;
        if let Some(slot) = self.data.get_mut(next) {
            if full {
                evicted = Some(*slot);
            }
            *slot = v;
        }
        self.next = Self::slot(next + 1);
        if !full {
            self.len += 1;
        }
        evicted
    }

    /// `i` (`< 2 W`) as a slot: `i mod W`. A mask for a power-of-two `W`
    /// (then every slot index is provably in bounds), one subtraction
    /// otherwise.
    #[inline(always)]
    fn slot(i: usize) -> usize {
        if W.is_power_of_two() {
            i & (W - 1)
        } else if i >= W {
            i - W
        } else {
            i
        }
    }

    /// Values held.
    #[inline]
    pub(crate) fn len(&self) -> usize {
        self.len
    }

    /// The values held, in storage order.
    #[inline]
    pub(crate) fn as_slice(&self) -> &[T] {
        self.data.get(..self.len).unwrap_or(&[])
    }

    /// The values held, oldest first.
    #[inline]
    #[allow(dead_code)]
    pub(crate) fn oldest_ordered(&self) -> impl Iterator<Item = &T> {
        // Until full, storage order is chronological; once full, the oldest
        // value sits at `next`.
        let (older, newer) = if self.len < W {
            (&[][..], self.as_slice())
        } else {
            (
                self.data.get(self.next..).unwrap_or(&[]),
                self.data.get(..self.next).unwrap_or(&[]),
            )
        };
        older.iter().chain(newer)
    }

    /// The most recent value, if any.
    #[inline]
    #[allow(dead_code)]
    pub(crate) fn recent(&self) -> Option<&T> {
        if self.len == 0 {
            return None;
        }
        let last = if self.next == 0 { W - 1 } else { self.next - 1 };
        self.data.get(last)
    }

    /// The value written `k` writes ago (1: the most recent), if still
    /// held (`1 <= k <= len`).
    #[inline]
    pub(crate) fn back(&self, k: usize) -> Option<T> {
        if k == 0 || k > self.len {
            return None;
        }
        self.data
            .get(Self::slot(Self::slot(self.next) + W - k))
            .copied()
    }

    /// Forgets every value.
    #[inline]
    pub(crate) fn clear(&mut self) {
        self.next = 0;
        self.len = 0;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn behaves_like_a_history_buffer() {
        let mut w = Window::<u32, 3>::filled_with(0);
        let mut h = heapless::HistoryBuffer::<u32, 3>::new();
        assert_eq!(w.recent(), None);
        for v in 1..=7 {
            let oldest = if h.len() == 3 {
                h.oldest_ordered().next().copied()
            } else {
                None
            };
            assert_eq!(w.push(v), oldest);
            h.write(v);
            assert_eq!(w.as_slice(), h.as_slice());
            assert_eq!(w.len(), h.len());
            assert_eq!(w.recent(), h.recent());
            assert!(w.oldest_ordered().eq(h.oldest_ordered()));
            // `back(k)` is the k-th most recent value (1: the latest).
            let mut newest_first: std::vec::Vec<u32> = h.oldest_ordered().copied().collect();
            newest_first.reverse();
            for k in 0..=4_usize {
                let want = k.checked_sub(1).and_then(|i| newest_first.get(i).copied());
                assert_eq!(w.back(k), want, "k {k}");
            }
        }
        w.clear();
        assert_eq!((w.len(), w.as_slice()), (0, &[][..]));
        assert_eq!(Window::<u8, 2>::default().len(), 0);
    }
}
