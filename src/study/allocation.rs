//! Which arm each participant of a study is in: the arms a roster gives, or permuted
//! blocks stratified by sex ([`super::randomise::permuted_blocks`]) for a roster
//! without them. The one place both `cohort` and `sheets` allocate.

use super::Study;
use super::randomise::permuted_blocks;
use crate::model::Sex;

/// The arms of a cohort, and how they were found.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Allocation {
    /// Every participant's arm as the roster gives it.
    Given(Vec<usize>),
    /// Arms drawn by permuted blocks stratified by sex.
    PermutedBlocks(Vec<usize>),
    /// No arm given and no randomisation asked for.
    Unallocated,
}

impl Allocation {
    /// The arm of each participant, in input order, if there is an allocation.
    pub fn arms(&self) -> Option<&[usize]> {
        match self {
            Allocation::Given(a) | Allocation::PermutedBlocks(a) => Some(a),
            Allocation::Unallocated => None,
        }
    }
}

/// Randomisation was asked for, but every participant already has an arm.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct AlreadyAllocated;

/// Allocate participants, each given as (its arm from the roster, if any; its sex),
/// in input order: the arms as given when every participant has one (refused if
/// `randomise` is asked for too), else permuted blocks with `seed` when `randomise`,
/// else [`Allocation::Unallocated`].
pub fn allocate(
    study: &Study,
    participants: &[(Option<usize>, Sex)],
    randomise: bool,
    seed: u64,
) -> Result<Allocation, AlreadyAllocated> {
    let given: Option<Vec<usize>> = participants.iter().map(|(arm, _)| *arm).collect();
    match (given, randomise) {
        (Some(_), true) => Err(AlreadyAllocated),
        (Some(arms), false) => Ok(Allocation::Given(arms)),
        (None, true) => {
            let sexes: Vec<Sex> = participants.iter().map(|(_, s)| *s).collect();
            Ok(Allocation::PermutedBlocks(permuted_blocks(
                &sexes,
                study.arms.len(),
                study.block_size as usize,
                seed,
            )))
        }
        (None, false) => Ok(Allocation::Unallocated),
    }
}
