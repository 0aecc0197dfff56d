//! Where a per-degree result (a spectrum or a comparison) goes: NetCDF, CSV, an SVG plot, or
//! CSV on standard output when no file was named. Shared by `kugel spectrum` and `kugel compare`.

use std::path::Path;

use kugel::io::atomic::{refuse_overwrite_of_input, write_bytes_atomic};
use kugel::io::degree_table::{
    degree_table_csv_text, write_degree_table_csv, write_degree_table_netcdf,
};
use kugel::io::provenance::Provenance;
use kugel::spectral::SpectralTable;

/// Where a per-degree result goes; shared with `kugel compare`.
pub struct TableOutputs<'a> {
    pub netcdf: Option<&'a Path>,
    pub csv: Option<&'a Path>,
    pub plot: Option<&'a Path>,
}

impl TableOutputs<'_> {
    pub fn is_empty(&self) -> bool {
        self.netcdf.is_none() && self.csv.is_none() && self.plot.is_none()
    }

    /// Refuses outputs that would overwrite an input or each other, before any work is done.
    pub fn check(&self, inputs: &[&Path]) -> anyhow::Result<()> {
        let outs: Vec<&Path> = [self.netcdf, self.csv, self.plot]
            .into_iter()
            .flatten()
            .collect();
        for (i, out) in outs.iter().enumerate() {
            refuse_overwrite_of_input(out, inputs)?;
            refuse_overwrite_of_input(out, &outs[..i])?;
        }
        Ok(())
    }

    /// Writes the table (NetCDF, CSV) and the plot, each atomically; CSV to stdout if nothing
    /// was asked for.
    pub fn write(
        &self,
        table: &SpectralTable,
        provenance: &Provenance,
        svg: impl FnOnce() -> String,
    ) -> anyhow::Result<()> {
        let degree_table = table.to_degree_table();
        if let Some(p) = self.netcdf {
            write_degree_table_netcdf(p, &degree_table, provenance)?;
        }
        if let Some(p) = self.csv {
            write_degree_table_csv(p, &degree_table, provenance)?;
        }
        if let Some(p) = self.plot {
            write_bytes_atomic(p, svg().as_bytes())?;
        }
        if self.is_empty() {
            print!("{}", degree_table_csv_text(&degree_table));
        }
        Ok(())
    }

    /// Prints the summary and the files written; with no output files the table went to
    /// standard output, so the summary goes to standard error instead.
    pub fn report(&self, summary: &str) {
        if self.is_empty() {
            eprint!("{summary}");
        } else {
            print!("{summary}");
            for p in [self.netcdf, self.csv, self.plot].into_iter().flatten() {
                crate::outputs::announce(
                    crate::outputs::Stream::Stdout,
                    format!("wrote {}", p.display()),
                );
            }
        }
    }
}

/// File name for titles and labels.
pub fn display_name(path: &Path) -> String {
    path.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string())
}
