//! The notebook-ready bundle of `radforce export FILE DIR`: the JSON report, the budget and a
//! thinned sample as CSV, the figures, and a Jupyter notebook (nbformat 4) that loads them with
//! pandas and redraws the main figures with matplotlib. Everything is deterministic: the same
//! scenario and seed give the same bytes.

use super::cautions::cautions;
use super::json::JsonReport;
use super::markdown::headline;
use super::plots::{self, PlotFormat};
use super::{Exporter, Report};
use crate::analysis::Findings;
use crate::engine::Samples;
use serde_json::{Value, json};

/// Trials written to `samples.csv` by default.
pub(crate) const DEFAULT_SAMPLE_ROWS: usize = 10_000;

fn lines(text: &str) -> Value {
    let parts: Vec<&str> = text.split_inclusive('\n').collect();
    json!(parts)
}

fn markdown(id: usize, text: &str) -> Value {
    json!({"cell_type": "markdown", "id": format!("cell-{id}"), "metadata": {}, "source": lines(text)})
}

fn code(id: usize, text: &str) -> Value {
    json!({"cell_type": "code", "execution_count": null, "id": format!("cell-{id}"), "metadata": {}, "outputs": [], "source": lines(text)})
}

/// The notebook.
pub(crate) fn notebook(f: &Findings) -> Vec<u8> {
    let mut intro = format!("# {}\n\n", f.title);
    for m in &f.measurands {
        intro.push_str(&headline(f, m));
        intro.push_str("\n\n");
    }
    intro.push_str(&format!(
        "This notebook loads the results that `radforce export` wrote beside it: `summary.json` (the JSON report), `budget.csv` (the uncertainty budget) and `samples.csv` ({} of the {} Monte Carlo trials, evenly thinned).\n\n",
        "a thinned set",
        f.trials
    ));
    intro.push_str("## Method\n\nMonte Carlo propagation of distributions (JCGM 101:2008): every input quantity is drawn from its stated distribution, the measurement model evaluated for each trial, and the estimate, standard uncertainty and coverage intervals taken from the model values (JCGM 101 7.5 to 7.7). The law of propagation of uncertainty (JCGM 100:2008) is given beside it with exact sensitivity coefficients and validated as JCGM 101 clause 8 describes.\n\n## Cautions\n\n");
    for c in cautions(f.laser) {
        intro.push_str(&format!("- {c}\n"));
    }
    let load = r##"import json

import matplotlib
matplotlib.use("Agg")
import matplotlib.pyplot as plt
import numpy as np
import pandas as pd

with open("summary.json") as fh:
    summary = json.load(fh)
budget = pd.read_csv("budget.csv")
samples = pd.read_csv("samples.csv")
results = pd.DataFrame(
    [
        {
            "measurand": m["name"],
            "unit": m["unit"],
            "estimate": m["estimate"],
            "u": m["standard_uncertainty"],
            "symmetric interval": m["symmetric_interval"],
            "shortest interval": m["shortest_interval"],
            "U": m["expanded_uncertainty"],
            "k": m["coverage_factor"],
        }
        for m in summary["measurands"]
    ]
)
results
"##;
    let histograms = r##"def column(m):
    # samples.csv holds SI values, the unit in the header: "power [W]"
    return next(c for c in samples.columns if c == m["name"] or c.startswith(m["name"] + " ["))

p = summary["coverage_probability"]
figures = []
for m in summary["measurands"]:
    values = samples[column(m)].to_numpy() / m["unit_to_si"]  # to the report's unit
    fig, ax = plt.subplots(figsize=(8, 4.5))
    ax.hist(values, bins=80, density=True, color="#9ecae1", label="thinned trials")
    ax.axvline(m["estimate"], color="black", label="estimate")
    for end in m["symmetric_interval"]:
        ax.axvline(end, color="#e6550d", linestyle="--")
    for end in m["shortest_interval"]:
        ax.axvline(end, color="#31a354", linestyle=":")
    if m.get("lpu"):
        for end in m["lpu"]["interval"]:
            ax.axvline(end, color="#756bb1", linestyle="-.")
    ax.set_xlabel(f"{m['name']} / {m['unit']}" if m["unit"] else m["name"])
    ax.set_ylabel("probability density")
    ax.set_title(f"Distribution of {m['name']}: {p:.0%} symmetric (dashed) and shortest (dotted) intervals")
    ax.legend()
    figures.append(fig)
len(figures)
"##;
    let budget_plot = r##"first = summary["measurands"][0]["name"]
rows = budget[budget["measurand"] == first].sort_values("share")
fig, ax = plt.subplots(figsize=(8, 0.4 * len(rows) + 1.5))
ax.barh(rows["input"], 100 * rows["share"], color="#3182bd")
ax.set_xlabel("share of the first-order variance / %")
ax.set_title(f"Uncertainty budget of {first}")
fig.tight_layout()
rows[["input", "distribution", "estimate", "standard_uncertainty", "sensitivity", "contribution", "share"]]
"##;
    let nb = json!({
        "cells": [markdown(1, &intro), code(2, load), code(3, histograms), code(4, budget_plot)],
        "metadata": {
            "kernelspec": {"display_name": "Python 3", "language": "python", "name": "python3"},
            "language_info": {"name": "python"},
        },
        "nbformat": 4,
        "nbformat_minor": 5,
    });
    let mut s = serde_json::to_string_pretty(&nb).unwrap_or_default();
    s.push('\n');
    s.into_bytes()
}

/// The files of the bundle, (name, bytes), in a fixed order.
pub(crate) fn bundle(
    f: &Findings,
    samples: &Samples,
    max_rows: usize,
) -> Result<Vec<(String, Vec<u8>)>, String> {
    let mut files = Vec::new();
    let summary = JsonReport.render(&Report::Run(f))?;
    files.push(("summary.json".to_string(), summary));
    files.push(("budget.csv".to_string(), super::csv::budget(f)));
    files.push((
        "samples.csv".to_string(),
        super::csv::samples(f, samples, Some(max_rows)),
    ));
    for fig in plots::figures(f, PlotFormat::Svg)? {
        files.push((format!("figures/{}", fig.file), fig.bytes));
    }
    files.push(("notebook.ipynb".to_string(), notebook(f)));
    Ok(files)
}
