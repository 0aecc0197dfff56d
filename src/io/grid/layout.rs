//! Recognising the layout of a user's latitude and longitude coordinates: which rows and
//! columns, in which order, make the engine grid (north→south rows, eastward columns), and
//! which quadrature is exact on it (Gauss–Legendre, Clenshaw–Curtis or Fejér).

use std::f64::consts::PI;

use ndarray::{s, Array2, ArrayView2};

use crate::error::{Error, Result};
use crate::sht::equiangular::{self, EquiangularLayout};
use crate::sht::{gauss_legendre, Grid, GridKind};

/// The latitude rows of a file in engine order with their quadrature.
#[derive(Debug, Clone, PartialEq)]
pub struct LatitudeAxis {
    /// File row indices, north to south.
    pub order: Vec<usize>,
    pub kind: GridKind,
    /// Exact colatitudes of the recognised layout (not the rounded file values), radians.
    pub colatitude_rad: Vec<f64>,
    pub weights: Vec<f64>,
    /// Highest degree this latitude rule supports on its own.
    pub max_degree: usize,
}

/// The longitude columns of a file in engine order.
#[derive(Debug, Clone, PartialEq)]
pub struct LongitudeAxis {
    /// File column indices, eastwards from `lon0_rad` (a duplicated wrap-around column is left out).
    pub order: Vec<usize>,
    pub lon0_rad: f64,
    /// Whether the file repeated its first column at +360°.
    pub dropped_wrap_column: bool,
}

fn describe(values: &[f64]) -> String {
    match (values.first(), values.last()) {
        (Some(a), Some(b)) => format!("{} values from {a} to {b}", values.len()),
        _ => "no values".to_string(),
    }
}

/// File row order north→south; checks the values are finite, in range and strictly monotonic.
fn north_to_south(lat: &[f64], what: &str) -> Result<Vec<usize>> {
    if lat.len() < 2 {
        return Err(Error::invalid(format!(
            "{what} has {} value(s); a global grid needs at least 2 rows",
            lat.len()
        )));
    }
    if let Some((i, v)) = lat
        .iter()
        .enumerate()
        .find(|(_, v)| !v.is_finite() || v.abs() > 90.0 + 1e-9)
    {
        return Err(Error::invalid(format!(
            "{what}[{i}] = {v} is not a latitude in [-90, 90]"
        )));
    }
    let ascending = lat[1] > lat[0];
    if let Some(i) =
        (1..lat.len()).find(|&i| (lat[i] > lat[i - 1]) != ascending || lat[i] == lat[i - 1])
    {
        return Err(Error::invalid(format!(
            "{what} is not monotonic: [{}] = {} then [{i}] = {}",
            i - 1,
            lat[i - 1],
            lat[i]
        )));
    }
    let mut order: Vec<usize> = (0..lat.len()).collect();
    if ascending {
        order.reverse();
    }
    Ok(order)
}

/// Recognises Gauss–Legendre, node-registered or cell-centred equiangular latitudes.
///
/// Tolerance: 1e-4 of the row spacing (float32 coordinates carry ~1e-5 degrees at worst).
/// `claimed_gauss` is set when the file says it holds a kugel Gauss grid; its latitudes must
/// then match the recomputed Gauss–Legendre nodes.
pub fn latitude_axis(lat_deg: &[f64], what: &str, claimed_gauss: bool) -> Result<LatitudeAxis> {
    let order = north_to_south(lat_deg, what)?;
    let ns: Vec<f64> = order.iter().map(|&i| lat_deg[i]).collect();
    let n = ns.len();
    let tol = 1e-4 * 180.0 / n as f64;
    let max_diff = |reference: &[f64]| {
        ns.iter()
            .zip(reference)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max)
    };

    // the same colatitudes and weights as `GaussGrid::new`, so a kugel Gauss grid read back is
    // bit-identical to the one it was synthesised on
    let (theta, w) = gauss_legendre::colatitudes_and_weights(n);
    let gauss_lat: Vec<f64> = theta.iter().map(|&t| 90.0 - t.to_degrees()).collect();
    let gauss_diff = max_diff(&gauss_lat);
    if gauss_diff < tol {
        return Ok(LatitudeAxis {
            order,
            kind: GridKind::Gauss,
            colatitude_rad: theta,
            weights: w,
            max_degree: n - 1,
        });
    }
    if claimed_gauss {
        return Err(Error::invalid(format!(
            "{what} is marked as a Gauss grid (kugel_grid = \"gauss\") but differs from the {n} Gauss–Legendre latitudes by up to {gauss_diff:.3e} degrees"
        )));
    }
    for layout in [EquiangularLayout::Nodes, EquiangularLayout::Cells] {
        if layout == EquiangularLayout::Nodes && n < 3 {
            continue;
        }
        let theta = equiangular::colatitudes(n, layout);
        let reference: Vec<f64> = theta.iter().map(|t| 90.0 - t.to_degrees()).collect();
        if max_diff(&reference) < tol {
            let weights = match layout {
                EquiangularLayout::Nodes => equiangular::clenshaw_curtis_weights(n),
                EquiangularLayout::Cells => equiangular::fejer_weights(n),
            };
            let kind = match layout {
                EquiangularLayout::Nodes => GridKind::EquiangularNodes,
                EquiangularLayout::Cells => GridKind::EquiangularCells,
            };
            return Ok(LatitudeAxis {
                order,
                kind,
                colatitude_rad: theta,
                weights,
                max_degree: (n - 1) / 2,
            });
        }
    }
    let steps: Vec<f64> = ns.windows(2).map(|p| p[0] - p[1]).collect();
    let (lo, hi) = steps
        .iter()
        .fold((f64::INFINITY, 0.0f64), |(a, b), &s| (a.min(s), b.max(s)));
    let spacing_uniform = hi - lo < 1e-4 * hi;
    Err(Error::invalid(
        if spacing_uniform && (ns[0] < 90.0 - 0.5 * hi - tol || ns[n - 1] > -90.0 + 0.5 * hi + tol)
        {
            format!(
            "{what} ({}) does not reach the poles: the grid is not global (need rows at ±90 degrees, or cell centres half a step from them)",
            describe(lat_deg)
        )
        } else if spacing_uniform {
            format!(
            "{what} ({}) is equally spaced but neither includes both poles nor sits at cell centres half a step from them; this layout is not supported",
            describe(lat_deg)
        )
        } else {
            format!(
            "{what} ({}) is neither Gauss–Legendre nor equally spaced (steps from {lo} to {hi} degrees)",
            describe(lat_deg)
        )
        },
    ))
}

/// Recognises equally spaced global longitudes in any convention (0..360, −180..180, a
/// cyclic shift such as 180..359,0..179, ascending or descending), with or without a
/// duplicated wrap-around column.
pub fn longitude_axis(lon_deg: &[f64], what: &str) -> Result<LongitudeAxis> {
    let n_all = lon_deg.len();
    if n_all < 1 {
        return Err(Error::invalid(format!("{what} is empty")));
    }
    if let Some((i, v)) = lon_deg.iter().enumerate().find(|(_, v)| !v.is_finite()) {
        return Err(Error::invalid(format!("{what}[{i}] = {v} is not finite")));
    }
    if n_all == 1 {
        return Err(Error::invalid(format!(
            "{what} holds the single longitude {}: one meridian is not a global grid",
            lon_deg[0]
        )));
    }
    // unwrap into a monotonic sequence: at most one jump of about ∓360
    let mut unwrapped = lon_deg.to_vec();
    let ascending = n_all < 2 || {
        let pos = lon_deg.windows(2).filter(|p| p[1] > p[0]).count();
        2 * pos >= n_all - 1
    };
    let mut jumps = 0;
    for i in 1..n_all {
        let d = unwrapped[i] - unwrapped[i - 1];
        if (ascending && d <= 0.0) || (!ascending && d >= 0.0) {
            let shift = if ascending { 360.0 } else { -360.0 };
            let fixed = unwrapped[i] + shift - unwrapped[i - 1];
            if jumps == 0
                && fixed.abs() <= 180.0 + 1e-9
                && ((ascending && fixed > 0.0) || (!ascending && fixed < 0.0))
            {
                jumps += 1;
                for v in &mut unwrapped[i..] {
                    *v += shift;
                }
            } else {
                return Err(Error::invalid(format!(
                    "{what} is not monotonic: [{}] = {} then [{i}] = {}",
                    i - 1,
                    lon_deg[i - 1],
                    lon_deg[i]
                )));
            }
        }
    }
    let mut order: Vec<usize> = (0..n_all).collect();
    if !ascending {
        order.reverse();
    }
    let east: Vec<f64> = order.iter().map(|&i| unwrapped[i]).collect();
    let mut n = n_all;
    let mut dropped = false;
    let span_all = east[n_all - 1] - east[0];
    if n_all >= 3 && (span_all - 360.0).abs() < 1e-4 * 360.0 / (n_all - 1) as f64 {
        n -= 1;
        order.pop();
        dropped = true;
    }
    let step = 360.0 / n as f64;
    let tol = 1e-4 * step;
    for k in 1..n {
        let d = east[k] - east[k - 1];
        if (d - step).abs() > tol {
            let span = east[n - 1] - east[0] + (east[n - 1] - east[n.saturating_sub(2)]).abs();
            return Err(Error::invalid(
                if span < 360.0 - tol
                    && east
                        .windows(2)
                        .all(|p| ((p[1] - p[0]) - (east[1] - east[0])).abs() < tol)
                {
                    format!(
                        "{what} ({}) covers only {span:.4} degrees: the grid is not global",
                        describe(lon_deg)
                    )
                } else {
                    format!(
                    "{what} ({}) is not equally spaced around the full circle: step [{}]→[{}] is {d} degrees, expected {step}",
                    describe(lon_deg),
                    order[k - 1],
                    order[k]
                )
                },
            ));
        }
    }
    Ok(LongitudeAxis {
        order,
        lon0_rad: east[0].to_radians().rem_euclid(2.0 * PI),
        dropped_wrap_column: dropped,
    })
}

/// The engine grid for recognised axes.
pub fn engine_grid(lat: &LatitudeAxis, lon: &LongitudeAxis) -> Grid {
    let nlon = lon.order.len();
    Grid {
        kind: lat.kind,
        colatitude_rad: lat.colatitude_rad.clone(),
        weights: lat.weights.clone(),
        nlon,
        lon0_rad: lon.lon0_rad,
        max_exact_degree: lat.max_degree.min(nlon.saturating_sub(1) / 2),
    }
}

/// The engine-order field (rows north→south, columns eastwards from `lon.lon0_rad`) of a
/// user's values, `values[[i, k]]` being the value at file latitude row `i` and longitude
/// column `k` (any strides: a transposed view serves a file stored longitude first).
///
/// This is the one reordering copy of a user's grid: the file reader and the Python bindings
/// both build their engine field with it. Columns that keep the file's order (all of them
/// when its longitudes ascend) are copied as slices rather than element by element, so the
/// copy runs at memory speed.
pub fn engine_order_field(
    lat: &LatitudeAxis,
    lon: &LongitudeAxis,
    values: ArrayView2<'_, f64>,
) -> Array2<f64> {
    let runs = column_runs(&lon.order);
    let (nlat, nlon) = (lat.order.len(), lon.order.len());
    // built row by row with `extend`, so the buffer is written once (no zeroing first);
    // file rows that are contiguous (C-ordered arrays, every row of a NetCDF variable)
    // are copied as slices
    let mut out = Vec::with_capacity(nlat * nlon);
    for &i in &lat.order {
        let source = values.row(i);
        for &(_, file_column, len) in &runs {
            let part = source.slice(s![file_column..file_column + len]);
            match part.as_slice() {
                Some(values) => out.extend_from_slice(values),
                None => out.extend(part.iter()),
            }
        }
    }
    Array2::from_shape_vec((nlat, nlon), out).expect("nlat rows of nlon values each")
}

/// The engine-order field as a view of the user's values, without a copy, when the engine
/// order is the values' own order or that order with the rows reversed (a grid stored south
/// to north) and the columns keep their order: `None` for every other layout (rotated or
/// descending longitudes, a dropped wrap-around column), which [`engine_order_field`] copies.
/// `values` as for [`engine_order_field`]; the view holds the same value at every engine
/// index as that copy.
pub fn engine_order_view<'a>(
    lat: &LatitudeAxis,
    lon: &LongitudeAxis,
    values: ArrayView2<'a, f64>,
) -> Option<ArrayView2<'a, f64>> {
    let (nlat, ncols) = values.dim();
    let columns_in_order =
        lon.order.len() == ncols && lon.order.iter().enumerate().all(|(k, &c)| c == k);
    if !columns_in_order || lat.order.len() != nlat {
        return None;
    }
    if lat.order.iter().enumerate().all(|(i, &r)| r == i) {
        Some(values)
    } else if lat
        .order
        .iter()
        .enumerate()
        .all(|(i, &r)| r == nlat - 1 - i)
    {
        Some(values.slice_move(s![..;-1, ..]))
    } else {
        None
    }
}

/// Maximal runs of engine columns whose file columns are consecutive, as (first engine
/// column, first file column, length).
fn column_runs(order: &[usize]) -> Vec<(usize, usize, usize)> {
    let mut runs = Vec::new();
    let mut c = 0;
    while c < order.len() {
        let start = c;
        while c + 1 < order.len() && order[c + 1] == order[c] + 1 {
            c += 1;
        }
        c += 1;
        runs.push((start, order[start], c - start));
    }
    runs
}

/// The first infinite value of an engine-order field as (file latitude row, file longitude
/// column), for an error message that points at the user's own indices.
pub fn first_infinite(
    field: &Array2<f64>,
    lat: &LatitudeAxis,
    lon: &LongitudeAxis,
) -> Option<(usize, usize)> {
    // the common case, a field with no infinite value, in one pass the compiler vectorises;
    // the indexed search runs only to locate the value for the message
    let clean = match field.as_slice() {
        Some(values) => {
            let mut blocks = values.chunks_exact(8);
            blocks.all(|b| b.iter().fold(true, |ok, v| ok & !v.is_infinite()))
                && blocks.remainder().iter().all(|v| !v.is_infinite())
        }
        None => field.iter().all(|v| !v.is_infinite()),
    };
    if clean {
        return None;
    }
    field
        .indexed_iter()
        .find(|(_, v)| v.is_infinite())
        .map(|((r, c), _)| (lat.order[r], lon.order[c]))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The view must hold what the copy holds, and exist only for the layouts it can serve.
    #[test]
    fn engine_order_view_equals_the_copy_where_it_exists() {
        let values = Array2::from_shape_fn((3, 4), |(i, k)| (10 * i + k) as f64);
        let lon_east = longitude_axis(&[0.0, 90.0, 180.0, 270.0], "lon").unwrap();
        // columns from 180° east keep their order (the grid's first longitude is 180°)
        let lon_from_180 = longitude_axis(&[180.0, 270.0, 0.0, 90.0], "lon").unwrap();
        let lon_west = longitude_axis(&[270.0, 180.0, 90.0, 0.0], "lon").unwrap();
        for lat_deg in [[-60.0, 0.0, 60.0], [60.0, 0.0, -60.0]] {
            let lat = latitude_axis(&lat_deg, "lat", false).unwrap();
            for lon in [&lon_east, &lon_from_180] {
                let copy = engine_order_field(&lat, lon, values.view());
                let view = engine_order_view(&lat, lon, values.view()).expect("a view");
                assert_eq!(view, copy);
            }
            // descending longitudes need the copy
            let copy = engine_order_field(&lat, &lon_west, values.view());
            assert_eq!(copy[[0, 0]], values[[lat.order[0], 3]]);
            assert!(engine_order_view(&lat, &lon_west, values.view()).is_none());
        }
        let wrapped = longitude_axis(&[0.0, 120.0, 240.0, 360.0], "lon").unwrap();
        assert!(wrapped.dropped_wrap_column);
        let lat = latitude_axis(&[-60.0, 0.0, 60.0], "lat", false).unwrap();
        assert!(engine_order_view(&lat, &wrapped, values.view()).is_none());
    }

    #[test]
    fn engine_order_copies_runs_of_columns_in_order() {
        // a 3 x 4 file stored south to north: engine rows run north to south; ascending
        // longitudes (from 180° here) keep the file's columns in one run, descending ones are
        // reversed column by column
        let lat = latitude_axis(&[-60.0, 0.0, 60.0], "lat", false).unwrap();
        assert_eq!(lat.order, vec![2, 1, 0]);
        let values = Array2::from_shape_fn((3, 4), |(i, k)| (10 * i + k) as f64);
        for (lon_deg, runs) in [
            ([180.0, 270.0, 0.0, 90.0], vec![(0, 0, 4)]),
            (
                [90.0, 0.0, 270.0, 180.0],
                vec![(0, 3, 1), (1, 2, 1), (2, 1, 1), (3, 0, 1)],
            ),
        ] {
            let lon = longitude_axis(&lon_deg, "lon").unwrap();
            assert_eq!(column_runs(&lon.order), runs);
            let field = engine_order_field(&lat, &lon, values.view());
            for (r, &i) in lat.order.iter().enumerate() {
                for (c, &k) in lon.order.iter().enumerate() {
                    assert_eq!(field[[r, c]], values[[i, k]]);
                }
            }
            // the same values stored longitude first give the same field
            let transposed = values.t().to_owned();
            assert_eq!(engine_order_field(&lat, &lon, transposed.t()), field);
        }
    }

    #[test]
    fn latitude_layouts() {
        let nodes: Vec<f64> = (0..181).map(|i| -90.0 + i as f64).collect();
        let a = latitude_axis(&nodes, "lat", false).unwrap();
        assert_eq!(a.kind, GridKind::EquiangularNodes);
        assert_eq!(a.order[0], 180, "north first");
        assert_eq!(a.max_degree, 90);
        let cells: Vec<f64> = (0..180).map(|i| 89.5 - i as f64).collect();
        let a = latitude_axis(&cells, "lat", false).unwrap();
        assert_eq!(a.kind, GridKind::EquiangularCells);
        assert_eq!(a.order[0], 0);
        let g = crate::sht::GaussGrid::new(30);
        let a = latitude_axis(&g.latitudes_deg(), "lat", true).unwrap();
        assert_eq!(a.kind, GridKind::Gauss);
        assert_eq!(a.max_degree, 30);
    }

    #[test]
    fn latitude_errors() {
        let partial: Vec<f64> = (0..121).map(|i| -60.0 + i as f64).collect();
        let e = latitude_axis(&partial, "lat", false)
            .unwrap_err()
            .to_string();
        assert!(e.contains("not global"), "{e}");
        let e = latitude_axis(&[-90.0, 0.0, -30.0, 90.0], "lat", false)
            .unwrap_err()
            .to_string();
        assert!(e.contains("not monotonic") && e.contains("[2]"), "{e}");
        let nodes: Vec<f64> = (0..19).map(|i| -90.0 + 10.0 * i as f64).collect();
        let e = latitude_axis(&nodes, "lat", true).unwrap_err().to_string();
        assert!(e.contains("Gauss"), "{e}");
    }

    #[test]
    fn longitude_conventions() {
        let a = longitude_axis(&(0..360).map(|k| k as f64).collect::<Vec<_>>(), "lon").unwrap();
        assert_eq!(a.order.len(), 360);
        assert_eq!(a.lon0_rad, 0.0);
        let a = longitude_axis(
            &(0..=360).map(|k| k as f64 - 180.0).collect::<Vec<_>>(),
            "lon",
        )
        .unwrap();
        assert!(a.dropped_wrap_column);
        assert_eq!(a.order.len(), 360);
        assert!((a.lon0_rad - PI).abs() < 1e-15);
        let shifted: Vec<f64> = (0..36).map(|k| ((k * 10 + 180) % 360) as f64).collect();
        let a = longitude_axis(&shifted, "lon").unwrap();
        assert_eq!(a.order, (0..36).collect::<Vec<_>>());
        let desc: Vec<f64> = (0..36).map(|k| 355.0 - 10.0 * k as f64).collect();
        let a = longitude_axis(&desc, "lon").unwrap();
        assert_eq!(a.order[0], 35);
        assert!((a.lon0_rad - 5f64.to_radians()).abs() < 1e-15);
        let e = longitude_axis(&(0..90).map(|k| k as f64).collect::<Vec<_>>(), "lon")
            .unwrap_err()
            .to_string();
        assert!(e.contains("not global"), "{e}");
        let e = longitude_axis(&[0.0, 90.0, 80.0, 270.0], "lon")
            .unwrap_err()
            .to_string();
        assert!(e.contains("not monotonic"), "{e}");
    }
}
