//! The living rays of one block of a batch: each ray that stops is swapped behind the living ones, in
//! place in the block's columns, so that the lane loops run over living rays only (no lane computes for a
//! stopped ray, and a vector of living rays needs no test of who is alive); when the block is done every
//! ray is put back in its place. A block in which no ray stops is never touched.
//!
//! A ray's arithmetic does not depend on its slot in a fused build (every lane width rounds alike, see
//! [`crate::simd::Fused`]) nor in the portable one (all of it unfused), so moving rays changes no bit of
//! any result.

/// Where the rays of one block of at most `B` rays are, in columns whose last is the fate (0 while the ray
/// is alive).
pub(crate) struct Living<const B: usize> {
    /// For each slot, the ray's place in the block (valid once `shuffled`).
    from: [u16; B],
    /// Rays in the block.
    len: usize,
    /// Rays alive: slots `0..live`.
    live: usize,
    /// Whether any ray has left its place.
    shuffled: bool,
}

impl<const B: usize> Living<B> {
    /// For blocks of at most `B` rays.
    pub(crate) fn new() -> Self {
        const { assert!(B <= u16::MAX as usize + 1) };
        Living { from: [0; B], len: 0, live: 0, shuffled: false }
    }

    /// Starts a block (columns of one length, at most `B`): its stopped rays go behind the living.
    pub(crate) fn start<const N: usize>(&mut self, block: &mut [&mut [f64]; N]) {
        let n = block[0].len();
        assert!(n <= B);
        self.len = n;
        self.live = n;
        self.shuffled = false;
        // One pass that vectorises; the slot by slot scan runs only if some fate is set.
        if block[N - 1][..n].iter().fold(0, |acc, f| acc | f.to_bits()) != 0 {
            self.compact(block);
        }
    }

    /// How many rays of the block are alive.
    pub(crate) fn live(&self) -> usize {
        self.live
    }

    /// The living rays' columns.
    pub(crate) fn living<'a, const N: usize>(&self, block: &'a mut [&mut [f64]; N]) -> [&'a mut [f64]; N] {
        let live = self.live;
        block.each_mut().map(|col| &mut col[..live])
    }

    /// Moves every ray among the living whose fate is set behind the living rays. From the last slot down,
    /// each stopped ray swaps with the last living one: every stopped ray above has already been moved
    /// out, so the slot it swaps with holds a living ray.
    pub(crate) fn compact<const N: usize>(&mut self, block: &mut [&mut [f64]; N]) {
        let mut end = self.live;
        for j in (0..self.live).rev() {
            if block[N - 1][j] != 0.0 {
                end -= 1;
                if j != end {
                    if !self.shuffled {
                        for (k, from) in self.from[..self.len].iter_mut().enumerate() {
                            *from = k as u16;
                        }
                        self.shuffled = true;
                    }
                    for col in block.iter_mut() {
                        col.swap(j, end);
                    }
                    self.from.swap(j, end);
                }
            }
        }
        self.live = end;
    }

    /// Puts every ray back in its place: each swap sends one ray home, along the cycles of the moves.
    pub(crate) fn finish<const N: usize>(&mut self, block: &mut [&mut [f64]; N]) {
        if !self.shuffled {
            return;
        }
        for j in 0..self.len {
            while usize::from(self.from[j]) != j {
                let home = usize::from(self.from[j]);
                for col in block.iter_mut() {
                    col.swap(j, home);
                }
                self.from.swap(j, home);
            }
        }
        self.shuffled = false;
    }
}

#[cfg(test)]
mod tests {
    use super::Living;

    /// Stopped rays go behind the living, and every ray comes back to its place with its values.
    #[test]
    #[allow(clippy::float_cmp)] // The values are moved, not computed: they must come back exactly.
    fn rays_move_behind_the_living_and_come_back() {
        let mut a: Vec<f64> = (0..13).map(|i| i as f64).collect();
        let mut fate: Vec<f64> = (0..13).map(|i| if i % 3 == 0 { 4.0 + i as f64 } else { 0.0 }).collect();
        let mut s = Living::<16>::new();
        let block = &mut [&mut a[..], &mut fate[..]];
        s.start(block);
        assert_eq!(s.live(), 8);
        let [values, fates] = s.living(block);
        assert!(fates.iter().all(|&f| f == 0.0));
        let mut seen: Vec<f64> = values.to_vec();
        seen.sort_by(f64::total_cmp);
        assert_eq!(seen, [1.0, 2.0, 4.0, 5.0, 7.0, 8.0, 10.0, 11.0]);
        // Two living rays stop; their new values and fates must come back to their places.
        for j in [0, 5] {
            block[0][j] += 100.0;
            block[1][j] = 99.0;
        }
        let moved: Vec<f64> = [0, 5].iter().map(|&j| block[0][j] - 100.0).collect();
        s.compact(block);
        assert_eq!(s.live(), 6);
        s.finish(block);
        for i in 0..13 {
            let hit = moved.contains(&(i as f64));
            assert_eq!(a[i], i as f64 + if hit { 100.0 } else { 0.0 }, "ray {i}");
            let want = if i % 3 == 0 {
                4.0 + i as f64
            } else if hit {
                99.0
            } else {
                0.0
            };
            assert_eq!(fate[i], want, "ray {i}");
        }
    }
}
