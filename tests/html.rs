//! `--format html`: one self-contained page (DESIGN "The command line"), read back by an HTML5
//! parser (scraper, on html5ever, the WHATWG parsing algorithm): well formed, no script, no
//! external resource, the figures inline as SVG, the budget by subsystem, the method, and the
//! cautions.

use crate::common::{radforce, scratch};
use scraper::{Html, Selector};

fn select<'a>(doc: &'a Html, css: &str) -> Vec<scraper::ElementRef<'a>> {
    doc.select(&Selector::parse(css).unwrap()).collect()
}

fn page(args: &[&str], name: &str) -> Html {
    let dir = scratch(name);
    let file = dir.join("r.html");
    let out = radforce()
        .args(args)
        .args(["--format", "html", "-q", "-o", file.to_str().unwrap()])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = std::fs::read_to_string(&file).unwrap();
    let doc = Html::parse_document(&text);
    assert!(doc.errors.is_empty(), "HTML parse errors: {:?}", doc.errors);
    doc
}

/// No script, no external resource: nothing to fetch and nothing to run (common practice for a
/// self-contained document).
fn self_contained(doc: &Html) {
    assert!(select(doc, "script").is_empty(), "a script");
    assert!(select(doc, "link, iframe, object, embed").is_empty());
    for e in select(doc, "[src], [href]") {
        for attr in ["src", "href"] {
            if let Some(v) = e.value().attr(attr) {
                assert!(
                    !(v.contains("://") || v.starts_with("//")),
                    "external resource {v}"
                );
            }
        }
    }
}

// A run: the summary in words, the results, the budget grouped by subsystem with subtotals, the
// figures inline (the budget figure among them), the method with its standards, the cautions.
#[test]
fn a_run_as_one_page() {
    let doc = page(
        &["run", "data/torsion-vacuum-20w.toml", "--trials", "20000"],
        "html-run",
    );
    self_contained(&doc);
    let headings: Vec<String> = select(&doc, "h2")
        .iter()
        .map(|h| h.text().collect())
        .collect();
    for want in [
        "Results",
        "Uncertainty budget of laser power",
        "Figures",
        "Method",
        "Cautions",
    ] {
        assert!(
            headings.iter().any(|h| h.starts_with(want)),
            "{want} in {headings:?}"
        );
    }
    let text: String = doc.root_element().text().collect();
    for want in [
        "JCGM 101:2008",
        "JCGM 100:2008",
        "IEC 60825-1",
        "ISO/IEC 17025",
        "By part of the apparatus:",
    ] {
        assert!(text.contains(want), "{want}");
    }
    // Subtotal rows of the budget, in bold, one per subsystem.
    let subtotals: Vec<String> = select(&doc, "td strong")
        .iter()
        .map(|s| s.text().collect())
        .collect();
    for part in ["environment", "balance", "beam", "readout", "mirror"] {
        assert!(
            subtotals.iter().any(|s| s == part),
            "{part} in {subtotals:?}"
        );
    }
    // Every figure drawn into the page, with a caption; the budget figure first.
    let figures = select(&doc, "figure");
    assert!(figures.len() >= 6, "{} figures", figures.len());
    for f in &figures {
        assert_eq!(f.select(&Selector::parse("svg").unwrap()).count(), 1);
    }
    let first: String = select(&doc, "figcaption")[0].text().collect();
    assert!(
        first.starts_with("Uncertainty budget of laser power"),
        "{first}"
    );
}

// A title with markup is shown as text, never interpreted.
#[test]
fn markup_in_a_title_stays_text() {
    let dir = scratch("html-title");
    let file = dir.join("s.toml");
    std::fs::write(
        &file,
        "title = \"<script>alert(1)</script> <b>bold</b>\"\ntrials = 2000\nlaser = false\n\
         [inputs.x]\ndist = \"normal\"\nmean = 1\nsd = 0.1\n[measurands.y]\nformula = \"2 * x\"\n",
    )
    .unwrap();
    let doc = page(&["run", file.to_str().unwrap()], "html-title-out");
    self_contained(&doc);
    assert!(select(&doc, "b").is_empty());
    let title: String = select(&doc, "h1")[0].text().collect();
    assert!(title.contains("<script>alert(1)</script>"), "{title}");
}

// compare and plan write the same kind of page.
#[test]
fn compare_and_plan_as_pages() {
    let doc = page(
        &[
            "compare",
            "data/compare-1kw-torsion-vs-balance.toml",
            "--trials",
            "20000",
        ],
        "html-compare",
    );
    self_contained(&doc);
    assert!(!select(&doc, "table").is_empty());
    assert!(!select(&doc, "figure svg").is_empty());
    let doc = page(
        &[
            "plan",
            "data/torsion-vacuum-20w.toml",
            "--target",
            "0.5%",
            "--trials",
            "20000",
        ],
        "html-plan",
    );
    self_contained(&doc);
    assert!(!select(&doc, "table").is_empty());
}
