//! Random streams: chunk k of a run draws from its own stream, derived only from (seed, k).
//!
//! The generator is Xoshiro256++ (Blackman and Vigna, "Scrambled linear pseudorandom number
//! generators", ACM TOMS 47(4), 2021) as implemented by rand_xoshiro 0.8. The stream of chunk k
//! starts at `Xoshiro256PlusPlus::seed_from_u64(seed)` advanced by k * 2^128 steps, so the
//! streams of one seed are disjoint stretches of one sequence of period 2^256 - 1, each 2^128
//! draws long (the same as rand_xoshiro's `jump_ce(k, 128)`).
//!
//! Advancing a linear generator by n steps is multiplying its state by x^n modulo the
//! characteristic polynomial over GF(2) (Haramoto et al., "Efficient jump ahead for F2-linear
//! random number generators", INFORMS J. Computing 20(3), 2008). The polynomials
//! x^(2^(128+j)) mod charpoly for j = 0..63 are computed once; chunk k applies the ones of the
//! set bits of k, a few microseconds per chunk instead of recomputing x^(k 2^128) each time.

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use std::sync::OnceLock;

/// The generator of every stream.
pub(crate) type Generator = Xoshiro256PlusPlus;

/// Low 256 coefficients of the characteristic polynomial of xoshiro256 (the x^256 term is
/// implicit), as rand_xoshiro 0.8 uses them in `jump_ce`.
const CHARPOLY: [u64; 4] = [
    0x9d11_6f2b_b0f0_f001,
    0x0280_002b_cefd_1a5e,
    0x04b4_edcf_2625_9f85,
    0x0003_c03c_3f3e_cb19,
];

/// x^(2^128) mod charpoly: the polynomial of rand_xoshiro's `jump`.
const JUMP: [u64; 4] = [
    0x180e_c6d3_3cfd_0aba,
    0xd5a6_1266_f0c9_392c,
    0xa958_2618_e03f_c9aa,
    0x39ab_dc45_29b1_661c,
];

fn mul_x(a: &mut [u64; 4]) {
    let carry = a[3] >> 63;
    a[3] = (a[3] << 1) | (a[2] >> 63);
    a[2] = (a[2] << 1) | (a[1] >> 63);
    a[1] = (a[1] << 1) | (a[0] >> 63);
    a[0] <<= 1;
    if carry != 0 {
        for (w, p) in a.iter_mut().zip(CHARPOLY) {
            *w ^= p;
        }
    }
}

fn mul_mod(a: &[u64; 4], b: &[u64; 4]) -> [u64; 4] {
    let mut r = [0u64; 4];
    for k in (0..256).rev() {
        mul_x(&mut r);
        if (a[k / 64] >> (k % 64)) & 1 != 0 {
            for i in 0..4 {
                r[i] ^= b[i];
            }
        }
    }
    r
}

/// x^(2^(128+j)) mod charpoly for j = 0..63.
fn jump_polynomials() -> &'static [[u64; 4]; 64] {
    static POLYS: OnceLock<[[u64; 4]; 64]> = OnceLock::new();
    POLYS.get_or_init(|| {
        let mut out = [[0u64; 4]; 64];
        out[0] = JUMP;
        for j in 1..64 {
            out[j] = mul_mod(&out[j - 1], &out[j - 1]);
        }
        out
    })
}

fn words(rng: &Generator) -> [u64; 4] {
    let bytes = rng.state();
    let mut s = [0u64; 4];
    for (i, w) in s.iter_mut().enumerate() {
        let mut b = [0u8; 8];
        b.copy_from_slice(&bytes[8 * i..8 * i + 8]);
        *w = u64::from_le_bytes(b);
    }
    s
}

fn from_words(s: [u64; 4]) -> Generator {
    let mut seed = [0u8; 32];
    for (i, w) in s.iter().enumerate() {
        seed[8 * i..8 * i + 8].copy_from_slice(&w.to_le_bytes());
    }
    Generator::from_seed(seed)
}

/// Advance `rng` by the number of steps whose polynomial is `poly` (x^n mod charpoly).
fn apply(rng: &Generator, poly: &[u64; 4]) -> Generator {
    let mut r = rng.clone();
    let mut acc = [0u64; 4];
    for word in poly {
        for b in 0..64 {
            if (word >> b) & 1 != 0 {
                let s = words(&r);
                for i in 0..4 {
                    acc[i] ^= s[i];
                }
            }
            r.next_u64();
        }
    }
    from_words(acc)
}

/// The stream of chunk `chunk` under `seed`.
pub fn chunk_stream(seed: u64, chunk: u64) -> Generator {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    if chunk > 0 {
        let polys = jump_polynomials();
        for (j, poly) in polys.iter().enumerate() {
            if (chunk >> j) & 1 != 0 {
                rng = apply(&rng, poly);
            }
        }
    }
    rng
}

#[cfg(test)]
mod tests {
    use super::*;

    // Chunk k starts k * 2^128 steps along the sequence of seed_from_u64(seed): the same as k
    // applications of rand_xoshiro's `jump` (2^128 steps) and as its `jump_ce(k, 128)`.
    #[test]
    fn chunk_streams_are_jumps() {
        let mut a = chunk_stream(7, 3);
        let mut b = Xoshiro256PlusPlus::seed_from_u64(7);
        b.jump();
        b.jump();
        b.jump();
        for _ in 0..10 {
            assert_eq!(a.next_u64(), b.next_u64());
        }
        for k in [1u64, 2, 5, 64, 1000, 65_535, 1 << 40, u64::MAX] {
            let mut fast = chunk_stream(11, k);
            let mut slow = Xoshiro256PlusPlus::seed_from_u64(11);
            slow.jump_ce(k, 128);
            for _ in 0..4 {
                assert_eq!(fast.next_u64(), slow.next_u64(), "chunk {k}");
            }
        }
        let mut c = chunk_stream(7, 0);
        let mut d = Xoshiro256PlusPlus::seed_from_u64(7);
        assert_eq!(c.next_u64(), d.next_u64());
    }
}
