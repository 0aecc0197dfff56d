//! `kugel fit --data PATH@KEY=VALUE;…`: one point file of a mixed fit with its own column map,
//! default quantity, weight factor and name.
//!
//! Keys after `@`, separated by `;`:
//! - `quantity=Q`: quantity of rows without a `quantity` column (default: `--quantity`);
//! - `weight=F`: factor on every weight 1/σ² of the file (default 1);
//! - `name=NAME`: name in the summary (default: the path);
//! - `columns=KEY=NAME,…`: the column map, as for `--columns`.
//!
//! Example: `--data 'orbit.csv@quantity=gravity-disturbance;weight=2;columns=value=dg,sigma=dg_err'`.

use std::path::PathBuf;

use kugel::error::Error;
use kugel::field::Quantity;
use kugel::observe::points::ColumnNames;

/// One `--data` argument, parsed.
#[derive(Debug, Clone, PartialEq)]
pub struct DataSetArg {
    pub path: PathBuf,
    pub quantity: Option<Quantity>,
    pub weight: f64,
    pub name: Option<String>,
    pub columns: Option<ColumnNames>,
}

impl DataSetArg {
    pub fn parse(spec: &str) -> kugel::Result<DataSetArg> {
        // The options follow the last `@` when what follows it holds a `=`; a bare path may
        // contain `@`.
        let (path, options) = match spec.rsplit_once('@') {
            Some((p, o)) if o.contains('=') => (p, o),
            _ => (spec, ""),
        };
        if path.trim().is_empty() {
            return Err(Error::invalid(format!("--data `{spec}`: no file name")));
        }
        let mut out = DataSetArg {
            path: PathBuf::from(path.trim()),
            quantity: None,
            weight: 1.0,
            name: None,
            columns: None,
        };
        for part in options.split(';').map(str::trim).filter(|p| !p.is_empty()) {
            let (key, value) = part.split_once('=').ok_or_else(|| {
                Error::invalid(format!(
                    "--data `{spec}`: `{part}` is not KEY=VALUE (keys: quantity, weight, name, columns)"
                ))
            })?;
            let value = value.trim();
            match key.trim().to_ascii_lowercase().as_str() {
                "quantity" => out.quantity = Some(value.parse()?),
                "weight" => {
                    out.weight = value
                        .parse::<f64>()
                        .ok()
                        .filter(|w| w.is_finite() && *w > 0.0)
                        .ok_or_else(|| {
                            Error::invalid(format!(
                                "--data `{spec}`: weight `{value}` is not a positive number"
                            ))
                        })?
                }
                "name" => out.name = Some(value.to_string()),
                "columns" => out.columns = Some(ColumnNames::parse(value)?),
                other => {
                    return Err(Error::invalid(format!(
                        "--data `{spec}`: key `{other}` is not known; expected quantity, weight, name or columns"
                    )))
                }
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn options_follow_the_path() {
        let d = DataSetArg::parse(
            "a@b/orbit.csv@quantity=gravity-disturbance;weight=2;columns=value=dg,sigma=e",
        )
        .unwrap();
        assert_eq!(d.path, PathBuf::from("a@b/orbit.csv"));
        assert_eq!(d.quantity, Some(Quantity::GravityDisturbance));
        assert_eq!(d.weight, 2.0);
        let c = d.columns.unwrap();
        assert_eq!((c.value.as_str(), c.sigma.as_str()), ("dg", "e"));
        assert_eq!(
            DataSetArg::parse("x@y.csv").unwrap().path,
            PathBuf::from("x@y.csv")
        );
        assert!(DataSetArg::parse("f.csv@weight=-1").is_err());
        assert!(DataSetArg::parse("f.csv@colour=red").is_err());
    }
}
