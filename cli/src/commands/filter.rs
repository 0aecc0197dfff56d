//! `kugel filter MODEL --filter SPEC [--filter SPEC…] -o OUT [--altitude-km H …]`: applies
//! degree-domain filters and, on request, radial continuation to a coefficient model and
//! writes the result with its provenance.

use std::path::PathBuf;

use anyhow::Context;

use super::CommandContext;
use kugel::error::Error;
use kugel::io::atomic::refuse_overwrite_of_input;
use kugel::io::degree_table::{
    write_degree_table_csv, write_degree_table_netcdf, DegreeColumn, DegreeTable,
};
use kugel::io::model::is_netcdf_path;
use kugel::io::model::{read_model, write_model};
use kugel::io::provenance::Provenance;
use kugel::spectral::continuation::{
    amplification, apply_continuation, radial_factors, ContinuationOptions, DownwardRegularization,
    DEFAULT_MAX_AMPLIFICATION,
};
use kugel::spectral::filter::{Filter, FilterChain, NoiseLevel};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coefficient model to filter (NetCDF or text table); never modified.
    pub model: PathBuf,

    /// Filter spec, repeatable or chained with '+': gauss:R_KM, lowpass:L1-L2,
    /// highpass:L1-L2, bandpass:L1-L2-L3-L4, butterworth:L0,N,
    /// wiener:SIGNAL.csv,NOISE.csv or wiener:SIGNAL.csv,noise=LEVEL.
    #[arg(long = "filter", short = 'f', value_name = "SPEC")]
    pub filters: Vec<String>,

    /// Output model (.nc for NetCDF-4, anything else for a text table).
    #[arg(long, short = 'o', value_name = "OUT")]
    pub output: PathBuf,

    /// Continue the model to this altitude above its reference sphere (negative: downward).
    #[arg(
        long,
        value_name = "H",
        allow_hyphen_values = true,
        conflicts_with = "radius_km"
    )]
    pub altitude_km: Option<f64>,

    /// Continue the model to the sphere of this radius.
    #[arg(long, value_name = "R")]
    pub radius_km: Option<f64>,

    /// Stabilise downward continuation (below the reference sphere): tikhonov:ALPHA
    /// (k_l = u_l/(u_l² + ALPHA), u_l = (r/R)^(l+1)) or cutoff:L (drop degrees above L).
    #[arg(long, value_name = "METHOD")]
    pub downward: Option<String>,

    /// Also write the per-degree weights (combined, each filter, continuation factor) to this
    /// file: NetCDF for .nc, CSV otherwise.
    #[arg(long, value_name = "FILE")]
    pub weights: Option<PathBuf>,

    /// Largest amplification (R/r)^(lmax+1) accepted for unregularised downward continuation.
    #[arg(long, value_name = "X", default_value_t = DEFAULT_MAX_AMPLIFICATION)]
    pub max_amplification: f64,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    refuse_overwrite_of_input(&args.output, &[&args.model])?;
    if let Some(w) = &args.weights {
        refuse_overwrite_of_input(w, &[&args.model, &args.output])?;
    }
    let chain = kugel::io::filter_spectra::filter_chain_from_specs(&args.filters)?;
    let continuation = continuation_request(args)?;
    if chain.is_empty() && continuation.is_none() {
        return Err(Error::invalid(
            "nothing to do: give at least one --filter SPEC or a continuation (--altitude-km, --radius-km)",
        )
        .into());
    }

    let mut model = read_model(&args.model)?;
    let lmax = model.lmax();
    let radius_m = model.reference_radius_m;
    let say = |line: String| {
        if !ctx.quiet {
            println!("{line}");
        }
    };

    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.model)?;
    for path in spectrum_files(&chain) {
        provenance.add_input(&path)?;
    }
    provenance.lmax = Some(lmax);
    provenance.normalization = Some(model.normalization.name().to_string());

    let mut table = WeightTable::new(lmax, radius_m);
    if !chain.is_empty() {
        for f in &chain.filters {
            table.add(
                &format!("weight_{}", f.kind()),
                &f.explain(),
                f.weights(lmax, radius_m)?,
            );
        }
        let weights = chain
            .weights(lmax, radius_m)
            .with_context(|| format!("filtering {}", args.model.display()))?;
        say(format!("filter chain: {}", chain.describe()));
        for line in chain.explain() {
            say(format!("  {line}"));
        }
        say(summary_of_weights(&weights, radius_m));
        table.add("weight", "combined filter weight", weights);
        chain.apply(&mut model)?;
        model.check_finite()?;
        provenance.filter = Some(chain.describe());
    }

    if let Some((target, options)) = continuation {
        let target_m = target.radius_m(radius_m)?;
        let factors = radial_factors(lmax, radius_m, target_m, &options)
            .with_context(|| format!("continuing {}", args.model.display()))?;
        apply_continuation(&mut model, target_m, &options)?;
        model.check_finite()?;
        let direction = if target_m >= radius_m {
            "upward"
        } else {
            "downward"
        };
        let reg = options
            .regularization
            .filter(|_| target_m < radius_m)
            .map(|r| format!(", {}", r.describe()))
            .unwrap_or_default();
        let text = format!(
            "{direction} continuation from radius {:.3} km to {:.3} km{reg}; largest factor {:.3e}",
            radius_m / 1e3,
            target_m / 1e3,
            amplification(&factors)
        );
        table.add("continuation_factor", &text, factors);
        say(text.clone());
        provenance
            .extra
            .push(("kugel_continuation".to_string(), text));
    }

    // one run, one outcome: the model and its weights table are published together
    // (`outputs::all_or_nothing`), so a failing table withdraws the model too
    write_model(&args.output, &model, &provenance)?;
    let announce = |line: String| {
        if !ctx.quiet {
            crate::outputs::announce(crate::outputs::Stream::Stdout, line);
        }
    };
    announce(format!("wrote {}", args.output.display()));
    if let Some(path) = &args.weights {
        table.write(path, &provenance)?;
        announce(format!("wrote {}", path.display()));
    }
    Ok(())
}

/// Target radius and options from the command line, or None when no continuation is asked.
fn continuation_request(args: &Args) -> anyhow::Result<Option<(Target, ContinuationOptions)>> {
    let regularization = args
        .downward
        .as_deref()
        .map(str::parse::<DownwardRegularization>)
        .transpose()?;
    if !(args.max_amplification.is_finite() && args.max_amplification >= 1.0) {
        return Err(Error::invalid(format!(
            "--max-amplification must be a finite number ≥ 1, got {}",
            args.max_amplification
        ))
        .into());
    }
    let options = ContinuationOptions {
        regularization,
        max_amplification: args.max_amplification,
    };
    let target = match (args.altitude_km, args.radius_km) {
        (None, None) => {
            if regularization.is_some() {
                return Err(Error::invalid(
                    "--downward regularises a continuation: give --altitude-km or --radius-km too",
                )
                .into());
            }
            return Ok(None);
        }
        (Some(h), _) => Target::Altitude(h),
        (None, Some(r)) => Target::Radius(r),
    };
    match target {
        Target::Radius(r) if !(r.is_finite() && r > 0.0) => {
            Err(Error::invalid(format!("--radius-km must be a positive number, got {r}")).into())
        }
        Target::Altitude(h) if !h.is_finite() => {
            Err(Error::invalid(format!("--altitude-km must be a finite number, got {h}")).into())
        }
        _ => Ok(Some((target, options))),
    }
}

/// Where to continue to: an altitude above the model's reference sphere, or a radius.
#[derive(Debug, Clone, Copy)]
enum Target {
    Altitude(f64),
    Radius(f64),
}

impl Target {
    /// The target radius in metres for a model of reference radius `reference_radius_m`.
    fn radius_m(self, reference_radius_m: f64) -> anyhow::Result<f64> {
        let r = match self {
            Target::Radius(r_km) => r_km * 1e3,
            Target::Altitude(h_km) => reference_radius_m + h_km * 1e3,
        };
        if r <= 0.0 {
            return Err(Error::invalid(format!(
                "{self:?} lies at or below the centre of the sphere (reference radius {:.3} km)",
                reference_radius_m / 1e3
            ))
            .into());
        }
        Ok(r)
    }
}

/// Spectrum files a chain reads (recorded with their digests).
fn spectrum_files(chain: &FilterChain) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for f in &chain.filters {
        if let Filter::Wiener(w) = f {
            out.push(w.signal_path.clone());
            if let NoiseLevel::Spectrum { path, .. } = &w.noise {
                out.push(path.clone());
            }
        }
    }
    out
}

/// Where the combined weight is at least one half, and where it falls below 0.5 and 0.01
/// again, with the half-wavelength πR/l of those degrees.
fn summary_of_weights(weights: &[f64], radius_m: f64) -> String {
    let half_wavelength_km = |l: usize| std::f64::consts::PI * radius_m / 1e3 / l.max(1) as f64;
    let Some(first) = weights.iter().position(|&w| w >= 0.5) else {
        return format!(
            "combined weight stays below 0.5 at every degree up to {}",
            weights.len() - 1
        );
    };
    let mut parts = Vec::new();
    if first > 0 {
        parts.push(format!("at least 0.5 from degree {first}"));
    }
    for level in [0.5, 0.01] {
        match weights[first..].iter().position(|&w| w < level) {
            Some(k) => parts.push(format!(
                "below {level} from degree {} (half-wavelength {:.0} km)",
                first + k,
                half_wavelength_km(first + k)
            )),
            None => parts.push(format!(
                "not below {level} up to degree {}",
                weights.len() - 1
            )),
        }
    }
    format!("combined weight: {}", parts.join("; "))
}

/// The per-degree weights written by `--weights`.
struct WeightTable {
    table: DegreeTable,
    names: Vec<String>,
}

impl WeightTable {
    fn new(lmax: usize, radius_m: f64) -> Self {
        let column = |name: &str, units: &str, long_name: &str, values: Vec<f64>| DegreeColumn {
            name: name.to_string(),
            units: units.to_string(),
            long_name: long_name.to_string(),
            values,
        };
        let degrees: Vec<f64> = (0..=lmax).map(|l| l as f64).collect();
        let half: Vec<f64> = (0..=lmax)
            .map(|l| {
                if l == 0 {
                    f64::NAN
                } else {
                    std::f64::consts::PI * radius_m / 1e3 / l as f64
                }
            })
            .collect();
        WeightTable {
            table: DegreeTable {
                columns: vec![
                    column("degree", "1", "spherical-harmonic degree", degrees),
                    column("half_wavelength_km", "km", "half-wavelength pi R / l", half),
                ],
                attributes: vec![("title".to_string(), "kugel filter weights".to_string())],
            },
            names: Vec::new(),
        }
    }

    /// Adds a column, numbering repeated names (two gauss filters → weight_gauss, weight_gauss_2).
    fn add(&mut self, name: &str, long_name: &str, values: Vec<f64>) {
        let count = self.names.iter().filter(|n| *n == name).count();
        self.names.push(name.to_string());
        let unique = if count == 0 {
            name.to_string()
        } else {
            format!("{name}_{}", count + 1)
        };
        self.table.columns.push(DegreeColumn {
            name: unique,
            units: "1".to_string(),
            long_name: long_name.to_string(),
            values,
        });
    }

    fn write(&self, path: &std::path::Path, provenance: &Provenance) -> kugel::error::Result<()> {
        if is_netcdf_path(path) {
            write_degree_table_netcdf(path, &self.table, provenance)
        } else {
            write_degree_table_csv(path, &self.table, provenance)
        }
    }
}
