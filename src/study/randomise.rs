//! Allocation by permuted blocks, stratified by sex: within each stratum, in roster
//! order, participants fill blocks of `block_size` places holding every arm
//! `block_size / arms` times in a random order (Fisher-Yates shuffle). Each stratum
//! has its own random stream derived from the seed, so the allocation is
//! reproducible and balanced within every complete block.
//!
//! Reference: Schulz KF, Grimes DA 2002, Lancet 359:515 (generation of allocation
//! sequences: blocked and stratified randomisation).

use crate::model::Sex;
use rand::rngs::ChaCha8Rng;
use rand::{RngExt, SeedableRng};

/// Mixed into the seed of the allocation streams (an arbitrary odd constant).
const ALLOCATION_DOMAIN: u64 = 0xA110_CA7E_5EED_0001;

/// The arm (index) of each participant, in input order.
pub fn permuted_blocks(sexes: &[Sex], arms: usize, block_size: usize, seed: u64) -> Vec<usize> {
    assert!(
        arms > 0 && block_size.is_multiple_of(arms),
        "validated block size"
    );
    let mut out = vec![0; sexes.len()];
    for (stream, stratum) in [Sex::Female, Sex::Male].into_iter().enumerate() {
        // Its own seed domain, so the allocation is independent of the streams that
        // draw synthetic participants from the same seed.
        let mut rng = ChaCha8Rng::seed_from_u64(splitmix64(seed ^ ALLOCATION_DOMAIN));
        rng.set_stream(stream as u64);
        let mut block: Vec<usize> = Vec::new();
        for (i, _) in sexes.iter().enumerate().filter(|(_, s)| **s == stratum) {
            if block.is_empty() {
                block = (0..block_size).map(|k| k % arms).collect();
                // Fisher-Yates, drawn from the back so `pop` takes the block in order.
                for j in (1..block.len()).rev() {
                    let r = rng.random_range(0..=j);
                    block.swap(j, r);
                }
                block.reverse();
            }
            out[i] = block.pop().expect("a non-empty block");
        }
    }
    out
}

/// SplitMix64 (Steele, Lea and Flood 2014, OOPSLA "Fast splittable pseudorandom number
/// generators"): a well-mixed 64-bit hash of `x`.
pub fn splitmix64(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}
