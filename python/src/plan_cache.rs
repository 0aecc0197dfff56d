//! Plans kept between calls. A Python loop over fields of one shape (a monthly series, an
//! ensemble, a benchmark) would otherwise rebuild, on every call, the Gauss–Legendre nodes,
//! the layout recognised from the coordinates (which recomputes Gauss nodes or Clenshaw–Curtis
//! weights to compare with) and the transform plan: at L = 255 that is a sizeable part of the
//! transform itself. Each cache keeps the few most recently used entries, shared across
//! threads through `Arc` (a plan is `Send + Sync`). What is cached depends only on its key, so
//! a cached entry gives the same numbers, bit for bit, as one built anew.

use std::sync::{Arc, Mutex, MutexGuard};

use kugel::io::grid::layout::{latitude_axis, longitude_axis, LatitudeAxis, LongitudeAxis};
use kugel::sht::{GaussGrid, Grid, TransformPlan};

/// Entries per cache: a few shapes in use at once (say analysis and synthesis grids of two
/// degrees) stay; a plan holds O(L + nlat) numbers, so four are cheap at any degree.
const CAPACITY: usize = 4;

/// The most recently used values by key, oldest first.
pub struct RecentCache<K, V> {
    entries: Mutex<Vec<(K, Arc<V>)>>,
}

impl<K: PartialEq + Clone, V> RecentCache<K, V> {
    pub const fn new() -> Self {
        RecentCache {
            entries: Mutex::new(Vec::new()),
        }
    }

    /// The value for `key`, built by `build` when absent. The build runs outside the lock, so
    /// other threads are not held up by it; two threads asking for the same new key at once
    /// may both build it, and the first one stored is kept.
    pub fn get_or_build<E>(
        &self,
        key: &K,
        build: impl FnOnce() -> Result<V, E>,
    ) -> Result<Arc<V>, E> {
        if let Some(found) = self.touch(key) {
            return Ok(found);
        }
        let built = Arc::new(build()?);
        let mut entries = self.lock();
        if let Some(i) = entries.iter().position(|(k, _)| k == key) {
            return Ok(Arc::clone(&entries[i].1));
        }
        if entries.len() == CAPACITY {
            entries.remove(0);
        }
        entries.push((key.clone(), Arc::clone(&built)));
        Ok(built)
    }

    /// The value for `key`, moved to the most recent place.
    fn touch(&self, key: &K) -> Option<Arc<V>> {
        let mut entries = self.lock();
        let i = entries.iter().position(|(k, _)| k == key)?;
        let entry = entries.remove(i);
        let value = Arc::clone(&entry.1);
        entries.push(entry);
        Some(value)
    }

    fn lock(&self) -> MutexGuard<'_, Vec<(K, Arc<V>)>> {
        // the list is never left half-changed, so a panic elsewhere does not spoil it
        self.entries.lock().unwrap_or_else(|p| p.into_inner())
    }
}

impl<K: PartialEq + Clone, V> Default for RecentCache<K, V> {
    fn default() -> Self {
        Self::new()
    }
}

/// A grid the caller names: Gauss–Legendre for a degree, or a regular step in degrees (the
/// step's bits, so that equal floats are equal keys).
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum GridSpec {
    Gauss(usize),
    StepDeg(u64),
}

static GRIDS: RecentCache<GridSpec, Grid> = RecentCache::new();
static PLANS: RecentCache<(usize, Grid), TransformPlan> = RecentCache::new();
/// The bits of the latitude and longitude coordinate values.
type CoordinateBits = (Vec<u64>, Vec<u64>);
/// The axes recognised from them.
/// The latitude and longitude axes of a recognised layout.
pub type Axes = (LatitudeAxis, LongitudeAxis);
static LAYOUTS: RecentCache<CoordinateBits, Axes> = RecentCache::new();

/// The engine grid named by `spec`.
pub fn grid(spec: GridSpec) -> kugel::Result<Arc<Grid>> {
    GRIDS.get_or_build(&spec, || match spec {
        GridSpec::Gauss(lmax) => Ok(GaussGrid::new(lmax)),
        GridSpec::StepDeg(bits) => {
            kugel::sht::equiangular::regular_grid_by_step(f64::from_bits(bits))
        }
    })
}

/// The transform plan for degree `lmax` on `grid`.
pub fn plan(lmax: usize, grid: &Grid) -> kugel::Result<Arc<TransformPlan>> {
    let key = (lmax, grid.clone());
    PLANS.get_or_build(&key, || TransformPlan::new(lmax, grid))
}

/// The latitude and longitude axes recognised from coordinate values (degrees), as the grid
/// reader recognises a file's; `lat_what` and `lon_what` name the coordinates in messages.
pub fn layout(
    lat_deg: &[f64],
    lon_deg: &[f64],
    lat_what: &str,
    lon_what: &str,
) -> kugel::Result<Arc<Axes>> {
    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<u64>>();
    let key = (bits(lat_deg), bits(lon_deg));
    LAYOUTS.get_or_build(&key, || {
        Ok((
            latitude_axis(lat_deg, lat_what, false)?,
            longitude_axis(lon_deg, lon_what)?,
        ))
    })
}
