//! `ripplectl compare`: two scenarios run side by side, their figures and
//! differences; with `--out`, one HTML report with both runs overlaid.

use crate::failure::{failed, Failure};
use crate::simulate::{run, Outcome};
use ripplectl::sim::{compare, pages, report};
use std::path::Path;

pub fn compare(first: &Path, second: &Path, out: Option<&Path>, json: bool) -> Result<(), Failure> {
    let (a, b) = rayon::join(|| run(Some(first)), || run(Some(second)));
    let (a, b): (Outcome, Outcome) = (a?, b?);
    if let Some(dir) = out {
        let html = pages::compare_report(&a.page(), &b.page()).map_err(failed)?.render();
        report::write_all(dir, &[("report.html", html.into_bytes())])
            .map_err(|e| failed(format!("{}: {e}", dir.display())))?;
    }
    if json {
        let both = serde_json::json!({ "first": a.summary, "second": b.summary });
        println!("{}", serde_json::to_string_pretty(&both).map_err(failed)?);
    } else {
        print!("{}", compare::table(&a.summary, &b.summary));
        if let Some(dir) = out {
            println!("  written to {}", dir.display());
        }
    }
    Ok(())
}
