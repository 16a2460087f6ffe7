//! A fast, non-cryptographic hash map for the keys the core makes itself.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

/// A fast hasher for the computation's own keys (the multiply-rotate scheme of rustc's FxHash):
/// cell, link and locator keys are small values made by the core; station keys are call signs
/// from the logs, which have passed `Callsign` validation. The hash is not flood-resistant: a file crafted with
/// colliding calls could slow one coverage computation down, which is all it could do.
#[derive(Default, Clone, Copy)]
pub(crate) struct Fx(u64);

impl Hasher for Fx {
    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for c in &mut chunks {
            self.write_u64(u64::from_le_bytes([
                c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7],
            ]));
        }
        for b in chunks.remainder() {
            self.write_u64(u64::from(*b));
        }
    }
    fn write_u8(&mut self, v: u8) {
        self.write_u64(u64::from(v));
    }
    fn write_u32(&mut self, v: u32) {
        self.write_u64(u64::from(v));
    }
    fn write_usize(&mut self, v: usize) {
        self.write_u64(v as u64);
    }
    fn write_u64(&mut self, v: u64) {
        self.0 = (self.0.rotate_left(5) ^ v).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
    fn finish(&self) -> u64 {
        self.0
    }
}

pub(crate) type FxMap<K, V> = HashMap<K, V, BuildHasherDefault<Fx>>;
