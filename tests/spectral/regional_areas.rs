//! Windows of arbitrary regions (`kugel::regional`, polygons and masks): a many-sided polygon
//! inscribed in a cap against the cap's windows, the Shannon number against the polygon's
//! area by Girard's theorem, every window's concentration recomputed by an independent
//! quadrature over spherical triangles, a mask of a cap against the cap, the whole-sphere mask,
//! and refusals of bad files.

use std::path::Path;

use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::provenance::Provenance;
use kugel::io::region::{read_mask, read_polygon, read_region};
use kugel::progress::Silent;
use kugel::regional::polygon::{cross, dot, unit, unit_vector as v};
use kugel::regional::{cap_tapers_at_pole, Region, RegionSpec, SphericalPolygon, TaperSet, Vertex};
use kugel::sht::gauss_legendre::nodes_and_weights;
use kugel::sht::{evaluate_points, GaussGrid};
use kugel::Coefficients;
use ndarray::Array2;

type V3 = [f64; 3];

/// The point at angular distance `d_deg` and bearing `bearing_deg` (clockwise from north)
/// from (lat, lon): the direct problem on the sphere (common practice).
fn destination(lat: f64, lon: f64, d_deg: f64, bearing_deg: f64) -> (f64, f64) {
    let (p1, l1) = (lat.to_radians(), lon.to_radians());
    let (d, b) = (d_deg.to_radians(), bearing_deg.to_radians());
    let p2 = (p1.sin() * d.cos() + p1.cos() * d.sin() * b.cos()).asin();
    let l2 = l1 + (b.sin() * d.sin() * p1.cos()).atan2(d.cos() - p1.sin() * p2.sin());
    (p2.to_degrees(), l2.to_degrees())
}

fn write_polygon(path: &Path, vertices: &[(f64, f64)]) {
    let mut text = String::from("# test ring\nlat_deg,lon_deg\n");
    for (lat, lon) in vertices {
        text.push_str(&format!("{lat:.15},{lon:.15}\n"));
    }
    std::fs::write(path, text).unwrap();
}

/// Area of a simple spherical polygon by Girard's theorem: Σ interior angles − (n − 2)π, the
/// smaller side (common practice).
fn girard_area(vertices: &[(f64, f64)]) -> f64 {
    let p: Vec<V3> = vertices.iter().map(|&(a, b)| v(a, b)).collect();
    let n = p.len();
    let tangent = |at: V3, to: V3| {
        let d = dot(at, to);
        unit([to[0] - d * at[0], to[1] - d * at[1], to[2] - d * at[2]])
    };
    let mut sum = 0.0;
    for i in 0..n {
        let (a, b, c) = (p[(i + n - 1) % n], p[i], p[(i + 1) % n]);
        let (ta, tc) = (tangent(b, a), tangent(b, c));
        sum += dot(b, cross(tc, ta))
            .atan2(dot(tc, ta))
            .rem_euclid(2.0 * std::f64::consts::PI);
    }
    let area = sum - (n as f64 - 2.0) * std::f64::consts::PI;
    area.min(4.0 * std::f64::consts::PI - area)
}

/// ∫_R h² dΩ / 4π over a polygon containing `centre`, as the signed sum over the fan of
/// spherical triangles (centre, A_i, A_{i+1}), each the radial projection of the flat triangle
/// with dΩ = d dA / |q|³ (d the distance of its plane from the origin), by a collapsed-square
/// Gauss–Legendre rule on the flat triangle (common practice). Independent of the latitude
/// rows the library integrates on.
fn concentration_by_triangles(h: &Coefficients, centre: V3, ring: &[(f64, f64)], n: usize) -> f64 {
    let (x, w) = nodes_and_weights(n);
    let mut pts = Vec::new();
    let mut wts = Vec::new();
    for i in 0..ring.len() {
        let a = v(ring[i].0, ring[i].1);
        let b = v(ring[(i + 1) % ring.len()].0, ring[(i + 1) % ring.len()].1);
        let (e1, e2) = (
            [a[0] - centre[0], a[1] - centre[1], a[2] - centre[2]],
            [b[0] - centre[0], b[1] - centre[1], b[2] - centre[2]],
        );
        let normal = cross(e1, e2);
        let twice_area = dot(normal, normal).sqrt();
        // signed: triangles of the fan turning the other way count negatively, so the sum is
        // the region's integral for any centre inside it, star-shaped or not
        let dist = dot(unit(normal), centre);
        for (s, ws) in x.iter().zip(&w) {
            let s = 0.5 * (s + 1.0);
            for (t, wt) in x.iter().zip(&w) {
                let t = 0.5 * (t + 1.0);
                // q = c + s e1 + s t (e2 − e1): Jacobian s · twice_area
                let q: V3 =
                    std::array::from_fn(|k| centre[k] + s * e1[k] + s * t * (e2[k] - e1[k]));
                let r = dot(q, q).sqrt();
                let weight = 0.25 * ws * wt * s * twice_area * dist / (r * r * r);
                let p = unit(q);
                pts.push((p[2].clamp(-1.0, 1.0).acos(), p[1].atan2(p[0])));
                wts.push(weight);
            }
        }
    }
    let vals = evaluate_points(h, &pts).unwrap();
    (vals
        .iter()
        .zip(&wts)
        .map(|(p, w)| p.value * p.value * w)
        .sum::<f64>()
        / (4.0 * std::f64::consts::PI))
        .abs()
}

fn polygon_set(path: &Path, lw: usize) -> TaperSet {
    let spec: RegionSpec = format!("polygon:{}", path.display()).parse().unwrap();
    spec.taper_set(lw, None, &Silent).unwrap()
}

#[test]
fn a_many_sided_polygon_in_a_cap_has_the_cap_concentrations() {
    // A ring of 720 vertices on the circle of radius 30° about (-20°, 75°): the great-circle
    // edges cut inside the circle, so the region is the cap less 1.0e-5 of its area, and its
    // windows' concentrations are the cap's (Simons, Dahlen & Wieczorek 2006) to about that
    // (measured: 1.4e-4, 3.5e-5, 8.8e-6, 2.2e-6 for 180, 360, 720, 1440 vertices, the 1/n² of
    // the area deficit). The Shannon number is trace D = (L+1)² A/4π with A by Girard's theorem
    // (1e-9 relative; measured 3e-10, the latitude rule's error).
    let dir = tempfile::tempdir().unwrap();
    let (lw, radius) = (10usize, 30.0);
    let ring: Vec<(f64, f64)> = (0..720)
        .map(|k| destination(-20.0, 75.0, radius, k as f64 * 0.5))
        .collect();
    let path = dir.path().join("ring.csv");
    write_polygon(&path, &ring);
    let set = polygon_set(&path, lw);
    let cap = cap_tapers_at_pole(lw, radius).unwrap();
    assert_eq!(set.tapers.len(), cap.len());
    let mut worst: f64 = 0.0;
    for (a, b) in set.tapers.iter().zip(&cap) {
        worst = worst.max((a.concentration - b.concentration).abs());
    }
    eprintln!("polygon vs cap: worst concentration difference {worst:e}");
    assert!(worst < 3e-5, "{worst}");
    let area = girard_area(&ring);
    let want = (lw as f64 + 1.0).powi(2) * area / (4.0 * std::f64::consts::PI);
    eprintln!("Shannon number {} vs Girard {want}", set.shannon_number);
    assert!(
        (set.shannon_number - want).abs() < 1e-9 * want,
        "{} vs {want}",
        set.shannon_number
    );
    let sum: f64 = set.concentrations().iter().sum();
    assert!((sum - want).abs() < 1e-9 * want);
    // the centre recorded is the cap's
    assert!(
        (set.centre_deg.0 + 20.0).abs() < 1e-6 && (set.centre_deg.1 - 75.0).abs() < 1e-6,
        "{:?}",
        set.centre_deg
    );
}

#[test]
fn an_irregular_polygon_shannon_number_and_each_concentration_by_quadrature() {
    // a non-convex ring with two notches, listed clockwise:
    // the region is still the smaller side. Trace against Girard's theorem (1e-9 relative);
    // each window's concentration against the fan-of-triangles quadrature (1e-11 absolute,
    // measured 4e-15: the library's latitude rule is split at every kink, the independent
    // rule integrates a smooth function over each triangle).
    let dir = tempfile::tempdir().unwrap();
    let ring = vec![
        (12.0, 31.0),
        (40.0, 25.0),
        (35.0, 45.0),
        (55.0, 60.0),
        (30.0, 70.0),
        (18.0, 52.0),
        (5.0, 58.0),
    ];
    let clockwise: Vec<(f64, f64)> = ring.iter().rev().copied().collect();
    let path = dir.path().join("bay.csv");
    write_polygon(&path, &clockwise);
    let lw = 12;
    let set = polygon_set(&path, lw);
    let area = girard_area(&ring);
    let want = (lw as f64 + 1.0).powi(2) * area / (4.0 * std::f64::consts::PI);
    eprintln!(
        "irregular: Shannon number {} vs Girard {want}",
        set.shannon_number
    );
    assert!((set.shannon_number - want).abs() < 1e-9 * want);
    let centre = unit(v(30.0, 48.0));
    let mut worst: f64 = 0.0;
    for t in set.tapers.iter().take(12) {
        let q = concentration_by_triangles(&t.coeffs, centre, &ring, 40);
        worst = worst.max((q - t.concentration).abs());
    }
    eprintln!("irregular: worst concentration error by triangles {worst:e}");
    assert!(worst < 1e-11, "{worst}");
    assert!(
        set.tapers[0].concentration > 0.9,
        "{}",
        set.tapers[0].concentration
    );
    // the best window is large inside and small far outside
    let h = &set.tapers[0].coeffs;
    let vals = evaluate_points(
        h,
        &[
            ((90f64 - 30.0).to_radians(), 48f64.to_radians()),
            ((90f64 + 30.0).to_radians(), 228f64.to_radians()),
        ],
    )
    .unwrap();
    assert!(vals[0].value.abs() > 20.0 * vals[1].value.abs(), "{vals:?}");
}

fn write_mask(path: &Path, lmax: usize, inside: impl Fn(f64, f64) -> bool) {
    let grid = GaussGrid::new(lmax);
    let (lat, lon) = (grid.latitudes_deg(), grid.longitudes_deg());
    let data = Array2::from_shape_fn(
        grid.shape(),
        |(r, k)| {
            if inside(lat[r], lon[k]) {
                1.0
            } else {
                0.0
            }
        },
    );
    write_mask_values(path, lmax, data);
}

/// A Gauss grid of degree `lmax` with the variable `mask` holding `data` (engine order).
fn write_mask_values(path: &Path, lmax: usize, data: Array2<f64>) {
    let grid = GaussGrid::new(lmax);
    let mut file = GridFile::from_engine_grid(&grid, "test mask");
    file.push("mask", "inside the region", "1", None, data);
    let provenance = Provenance::from_command_line("test");
    write_grid(
        path,
        &file,
        &GridWriteOptions {
            float32: false,
            lon_convention: LonConvention::ZeroTo360,
            provenance: &provenance,
        },
    )
    .unwrap();
}

#[test]
fn a_mask_of_a_cap_gives_the_cap_windows_and_the_whole_sphere_gives_ones() {
    // A mask of the cap of 35° about the north pole on a Gauss grid of degree 359 (0.5°
    // cells): full rings of cells, so the region is a cap whose radius is that of the rows'
    // area, 35.076°, up to where its edge falls between rows; the concentrations must match
    // that cap's (SDW 2006) to 2e-4 (measured 5.6e-5; against the 35° cap they differ by 3.5e-3).
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("cap.nc");
    let lw = 8;
    write_mask(&path, 359, |lat, _| lat > 55.0);
    let mask = read_mask(&path).unwrap();
    // the cap of the same area as the rows marked inside: Σ w over them = 1 − cos θ
    let inside: f64 = mask
        .grid
        .colatitude_rad
        .iter()
        .zip(&mask.grid.weights)
        .filter(|(t, _)| 90.0 - t.to_degrees() > 55.0)
        .map(|(_, w)| w)
        .sum();
    let radius = (1.0 - inside).acos().to_degrees();
    eprintln!("mask: cap of equal area has radius {radius}");
    let set = Region::Mask(mask)
        .taper_set("mask:cap.nc", lw, None, &Silent)
        .unwrap();
    let cap = cap_tapers_at_pole(lw, radius).unwrap();
    let mut worst: f64 = 0.0;
    for (a, b) in set.tapers.iter().zip(&cap) {
        worst = worst.max((a.concentration - b.concentration).abs());
    }
    eprintln!("mask vs cap: worst concentration difference {worst:e}");
    assert!(worst < 2e-4, "{worst}");
    // every cell inside: D is the identity (orthogonality on the grid's exact quadrature)
    let all = dir.path().join("all.nc");
    write_mask(&all, 40, |_, _| true);
    let spec: RegionSpec = format!("mask:{}", all.display()).parse().unwrap();
    let set = spec.taper_set(lw, None, &Silent).unwrap();
    let n = ((lw + 1) * (lw + 1)) as f64;
    assert!(
        (set.shannon_number - n).abs() < 1e-11 * n,
        "{}",
        set.shannon_number
    );
    assert!(set
        .tapers
        .iter()
        .all(|t| (t.concentration - 1.0).abs() < 1e-12));
    // a grid too coarse for products of degree 2·LW is refused, naming both degrees
    let e = spec.taper_set(25, None, &Silent).unwrap_err().to_string();
    assert!(e.contains("degree 40") && e.contains("50"), "{e}");
}

#[test]
fn bad_region_files_are_refused_with_file_and_line() {
    let dir = tempfile::tempdir().unwrap();
    let case = |name: &str, text: &str, words: &[&str]| {
        let path = dir.path().join(name);
        std::fs::write(&path, text).unwrap();
        let e = read_polygon(&path).unwrap_err().to_string();
        assert!(e.contains(name), "{e}");
        for w in words {
            assert!(e.contains(w), "{name}: {e}");
        }
    };
    case("empty.csv", "# nothing\n", &["no vertices"]);
    case(
        "two.csv",
        "lat,lon\n10,20\n11,21\n",
        &["2 distinct", "at least 3"],
    );
    case(
        "bow.csv",
        "0,0\n10,10\n10,0\n0,10\n",
        &["crosses itself", "line 1", "line 3"],
    );
    case(
        "word.csv",
        "lat,lon\n10,20\n11,east\n12,20\n",
        &["line 3", "longitude", "east"],
    );
    case(
        "lat.csv",
        "10,20\n95,20\n12,25\n",
        &["line 2", "95", "[-90, 90]"],
    );
    case("nohead.csv", "north,east\n10,20\n", &["line 1", "lat"]);
    let mask = dir.path().join("half.nc");
    let mut data = Array2::zeros(GaussGrid::new(20).shape());
    data[(3, 4)] = 0.5;
    data[(2, 2)] = 1.0;
    write_mask_values(&mask, 20, data);
    let e = read_region(&RegionSpec::Mask { path: mask.clone() })
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("half.nc") && e.contains("0.5") && e.contains("1 inside"),
        "{e}"
    );
    let text = dir.path().join("not_a_grid.nc");
    std::fs::write(&text, "lat,lon\n").unwrap();
    assert!(read_mask(&text).is_err());
}

#[test]
fn circles_grazing_a_vertex_are_classified() {
    // a latitude circle 1e-14 below the northernmost vertex (30°N, 25°E) crosses the region in
    // a sliver about 1e-7 rad wide: it must come out as at most that, never as an error
    // (common practice: the sliver's share of the area is below the rule's error)
    let ring: Vec<Vertex> = [(10.0, 20.0), (30.0, 25.0), (15.0, 40.0)]
        .iter()
        .enumerate()
        .map(|(i, &(lat, lon))| Vertex {
            lat_deg: lat,
            lon_deg: lon,
            origin: format!("line {}", i + 1),
        })
        .collect();
    let p = SphericalPolygon::new(ring, "tri.csv").unwrap();
    for dz in [1e-14, 1e-12, 1e-10, 1e-6] {
        let iv = p.intervals_at(30f64.to_radians().sin() - dz).unwrap();
        let width: f64 = iv.iter().map(|(a, b)| b - a).sum();
        assert!(
            width < 1e-2 * dz.sqrt().max(1e-7) * 100.0,
            "dz {dz}: {iv:?}"
        );
    }
}

/// A star-shaped ring of `n` vertices about (lat, lon): radius 20° with wiggles of 3° and 1°
/// (simple because every radius is positive and the bearing increases).
fn wiggly_ring(lat: f64, lon: f64, n: usize) -> Vec<(f64, f64)> {
    (0..n)
        .map(|k| {
            let phi = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
            let r = 20.0 + 3.0 * (7.0 * phi).sin() + (53.0 * phi).sin();
            destination(lat, lon, r, phi.to_degrees())
        })
        .collect()
}

fn same_intervals(p: &SphericalPolygon, z: f64) -> usize {
    // reference: the classification of every arc by the fan test (intervals_at_reference)
    let fast = p.intervals_at(z).unwrap();
    let slow = p.intervals_at_reference(z).unwrap();
    assert_eq!(fast.len(), slow.len(), "z {z}: {fast:?} vs {slow:?}");
    for (a, b) in fast.iter().zip(&slow) {
        assert!(
            (a.0 - b.0).abs() < 1e-12 && (a.1 - b.1).abs() < 1e-12,
            "z {z}: {a:?} vs {b:?}"
        );
    }
    fast.len()
}

#[test]
fn fast_latitude_intervals_match_the_reference() {
    // rings listed either way, one about a pole (a circle with no crossing), one across the
    // date line, a small octant-like triangle, and rows through vertices (where two crossings
    // coincide and the fast path falls back to the fan test)
    let mut rings: Vec<Vec<(f64, f64)>> = vec![
        wiggly_ring(30.0, 40.0, 300),
        wiggly_ring(-75.0, 170.0, 301),
        wiggly_ring(80.0, -20.0, 150),
        vec![(90.0, 0.0), (0.0, 0.0), (0.0, 90.0)],
    ];
    let mut reversed = rings[0].clone();
    reversed.reverse();
    rings.push(reversed);
    let mut arcs = 0;
    for ring in rings {
        let vertices: Vec<Vertex> = ring
            .iter()
            .enumerate()
            .map(|(i, &(lat_deg, lon_deg))| Vertex {
                lat_deg,
                lon_deg,
                origin: format!("vertex {i}"),
            })
            .collect();
        let p = SphericalPolygon::new(vertices, "ring").unwrap();
        for k in 0..=997 {
            arcs += same_intervals(&p, -0.999 + 1.998 * k as f64 / 997.0);
        }
        for &(lat, _) in ring.iter().step_by(7) {
            arcs += same_intervals(&p, lat.to_radians().sin());
        }
    }
    assert!(arcs > 1000, "too few arcs compared: {arcs}");
}

#[test]
fn a_ring_of_ten_thousand_vertices_gives_the_reference_rows() {
    // The rows of a 10,000-vertex ring (the size of a digitised coastline) from the fast
    // intervals, every 40th against the reference; the whole row set would take the reference
    // minutes (rows × crossings × vertices).
    let ring = wiggly_ring(30.0, 40.0, 10_000);
    let vertices: Vec<Vertex> = ring
        .iter()
        .map(|&(lat_deg, lon_deg)| Vertex {
            lat_deg,
            lon_deg,
            origin: "ring".into(),
        })
        .collect();
    let p = SphericalPolygon::new(vertices, "ring").unwrap();
    let rows = kugel::regional::polygon_rows(&p, 10).unwrap();
    assert!(rows.z.len() > 1000, "{} rows", rows.z.len());
    for (i, &z) in rows.z.iter().enumerate().step_by(40) {
        let n = same_intervals(&p, z);
        assert_eq!(n, rows.intervals[i].len());
    }
}
