//! Deterministic pseudo-random numbers for the unit tests: a 64-bit linear
//! congruential generator with Knuth's MMIX constants (from memory), and
//! random masks drawn from it.

use crate::mask::Mask;

/// The generator; `Lcg(seed)`.
pub(crate) struct Lcg(pub u64);

impl Lcg {
    /// The next 31-bit number (the state's high bits).
    pub(crate) fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }
    /// A number below `n`.
    pub(crate) fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
    /// A number in [0, 1).
    pub(crate) fn unit(&mut self) -> f64 {
        self.next() as f64 / (1u64 << 31) as f64
    }
    /// A `w` x `h` mask, row-major, each cell set when `set` holds for
    /// its index and a fresh draw below 100.
    pub(crate) fn mask(&mut self, w: usize, h: usize, set: impl Fn(usize, u64) -> bool) -> Mask {
        let mut m = Mask::new(w, h, false);
        for (i, c) in m.cells.iter_mut().enumerate() {
            *c = set(i, self.below(100)) as u8;
        }
        m
    }
}
