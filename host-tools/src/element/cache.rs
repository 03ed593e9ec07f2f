//! A memo of full-model points keyed by sample and temperature.
//!
//! The calibration station simulates hundreds of parts at a handful of
//! chamber temperatures and many stimuli; the stimulus only enters the
//! circuit algebra, so each (region, temperature) is solved once. Arms that
//! share a doping share one entry. The memo is bounded: it is emptied when it
//! grows past [`CAPACITY`] entries, so memory stays flat in long runs.

use crate::physics::{Material, ModelError, ModelPoint, Sample, Species, evaluate};
use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

/// Most entries kept before the memo is emptied (about 10 MB at most).
pub const CAPACITY: usize = 65_536;

/// Exact identity of a model evaluation: material, dopants (bit patterns of
/// the densities) and temperature (bit pattern), so hits are bit-exact.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
struct Key {
    material: Material,
    donors: Vec<(Species, u64)>,
    acceptors: Vec<(Species, u64)>,
    t_k_bits: u64,
}

impl Key {
    fn new(sample: &Sample, t_k: f64) -> Key {
        let dopants = |v: &[crate::physics::Dopant]| {
            v.iter()
                .map(|d| (d.species, d.density_cm3.to_bits()))
                .collect()
        };
        Key {
            material: sample.material,
            donors: dopants(&sample.donors),
            acceptors: dopants(&sample.acceptors),
            t_k_bits: t_k.to_bits(),
        }
    }
}

fn memo() -> &'static Mutex<HashMap<Key, ModelPoint>> {
    static MEMO: OnceLock<Mutex<HashMap<Key, ModelPoint>>> = OnceLock::new();
    MEMO.get_or_init(|| Mutex::new(HashMap::new()))
}

/// [`evaluate`] with a memo: identical inputs give the identical point
/// without solving again. Errors are not memoized.
pub fn evaluate_cached(sample: &Sample, t_k: f64) -> Result<ModelPoint, ModelError> {
    let key = Key::new(sample, t_k);
    if let Ok(map) = memo().lock()
        && let Some(point) = map.get(&key)
    {
        return Ok(*point);
    }
    // Solve outside the lock so parallel callers do not serialize on it.
    let point = evaluate(sample, t_k)?;
    if let Ok(mut map) = memo().lock() {
        if map.len() >= CAPACITY {
            map.clear();
        }
        map.insert(key, point);
    }
    Ok(point)
}
