//! Random streams: chunk k of a run draws from its own stream, derived only from (seed, k).
//!
//! The generator is Xoshiro256++ (Blackman and Vigna, "Scrambled linear pseudorandom number
//! generators", ACM TOMS 47(4), 2021) as implemented by rand_xoshiro 0.8. The stream of chunk k
//! starts at `Xoshiro256PlusPlus::seed_from_u64(seed)` advanced by k * 2^128 steps (the
//! generator's jump polynomial, `jump_ce(k, 128)`), so the streams of one seed are disjoint
//! stretches of one sequence of period 2^256 - 1, each 2^128 draws long.

use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;

/// The generator of every stream.
pub type Generator = Xoshiro256PlusPlus;

/// The stream of chunk `chunk` under `seed`.
pub fn chunk_stream(seed: u64, chunk: u64) -> Generator {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    if chunk > 0 {
        rng.jump_ce(chunk, 128);
    }
    rng
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng;

    // jump_ce(k, 128) is k applications of the 2^128 jump (rand_xoshiro's `jump`).
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
        let mut c = chunk_stream(7, 0);
        let mut d = Xoshiro256PlusPlus::seed_from_u64(7);
        assert_eq!(c.next_u64(), d.next_u64());
    }
}
