//! `--format html`: the proposal-ready report as one self-contained HTML file. The words and
//! tables are those of the Markdown report (so the two never disagree), turned into HTML by
//! pulldown-cmark; every figure is drawn into the page as inline SVG; the style sheet is in the
//! page; there is no script and no external resource, so the file opens anywhere, offline, and
//! prints to PDF from a browser on A4 (tables wrap and shrink rather than being cut).

use super::markdown::MarkdownReport;
use super::plots::{self, PlotFormat};
use super::{Context, Exporter, Report};
use pulldown_cmark::{CowStr, Event, Options, Parser, Tag, TagEnd, html};

/// The folder name the Markdown report is told its figures are in; its image links are replaced
/// by the figures themselves.
const INLINE: &str = "radforce-inline-figure";

/// The style sheet: readable on screen, A4 in print.
const STYLE: &str = r#"
:root { color-scheme: light; }
body { font-family: "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; font-size: 10.5pt;
       line-height: 1.45; color: #1a1a1a; max-width: 60em; margin: 2em auto; padding: 0 1.5em; }
h1 { font-size: 1.7em; border-bottom: 2px solid #1f77b4; padding-bottom: .2em; }
h2 { font-size: 1.25em; margin-top: 1.6em; color: #1f4e79; }
table { border-collapse: collapse; margin: .8em 0; font-size: .86em; width: 100%;
        table-layout: auto; }
th, td { border: 1px solid #c8c8c8; padding: .25em .45em; text-align: left;
         vertical-align: top; overflow-wrap: anywhere; }
th { background: #eef3f8; }
tr:nth-child(even) td { background: #fafafa; }
code { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: .95em; }
figure { margin: 1.2em 0; text-align: center; break-inside: avoid; page-break-inside: avoid; }
figure svg { max-width: 100%; height: auto; }
figcaption { font-size: .9em; color: #444; margin-top: .3em; }
.caution { border-left: 4px solid #d62728; background: #fff5f5; padding: .4em .8em; }
footer { margin-top: 2em; font-size: .8em; color: #666; border-top: 1px solid #ddd; }
@page { size: A4; margin: 16mm 14mm; }
@media print {
  body { max-width: none; margin: 0; padding: 0; font-size: 9.5pt; }
  table { font-size: 7.8pt; }
  h2 { break-after: avoid; page-break-after: avoid; }
  tr, figure { break-inside: avoid; page-break-inside: avoid; }
}
"#;

/// The HTML report (no settings of its own: figures are always inline SVG).
#[derive(Clone, Debug)]
pub(crate) struct HtmlReport;

/// Text safe inside HTML.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// An SVG drawing ready to sit in the page: without its XML declaration, with a viewBox so that
/// it scales to the page width.
fn inline_svg(bytes: &[u8]) -> String {
    let text = String::from_utf8_lossy(bytes);
    let start = text.find("<svg").unwrap_or(0);
    let svg = &text[start..];
    if svg.contains("viewBox") {
        return svg.to_string();
    }
    let attr = |name: &str| -> Option<String> {
        let head = &svg[..svg.find('>')?];
        let at = head.find(&format!(" {name}=\""))? + name.len() + 3;
        Some(head[at..].split('"').next()?.to_string())
    };
    match (attr("width"), attr("height")) {
        (Some(w), Some(h)) => svg.replacen("<svg", &format!("<svg viewBox=\"0 0 {w} {h}\""), 1),
        _ => svg.to_string(),
    }
}

impl Exporter for HtmlReport {
    fn new(_: &Context) -> Self {
        HtmlReport
    }

    fn render(&self, report: &Report<'_>) -> Result<Vec<u8>, String> {
        let markdown = MarkdownReport {
            figures: Some(INLINE.to_string()),
            plot_format: PlotFormat::Svg,
        };
        let text = String::from_utf8(markdown.render(report)?)
            .map_err(|e| format!("the report is not UTF-8: {e}"))?;
        let figures = plots::report_figures(report, PlotFormat::Svg)?;
        let title = text
            .lines()
            .next()
            .and_then(|l| l.strip_prefix("# "))
            .unwrap_or("radforce report")
            .to_string();
        // Markdown to HTML, with three changes: raw HTML in the text (a title or label that
        // holds markup) is shown as text, never interpreted; an image of a figure becomes the
        // figure itself with its caption; and the cautions get their own box.
        let mut events: Vec<Event<'_>> = Vec::new();
        let mut in_image: Option<String> = None;
        let mut caption = String::new();
        let mut in_cautions = false;
        let mut heading = String::new();
        let mut in_heading = false;
        for event in Parser::new_ext(&text, Options::ENABLE_TABLES) {
            match event {
                Event::Html(h) | Event::InlineHtml(h) => events.push(Event::Text(h)),
                Event::Start(Tag::Image { dest_url, .. }) => {
                    in_image = Some(dest_url.to_string());
                    caption.clear();
                }
                Event::End(TagEnd::Image) => {
                    let dest = in_image.take().unwrap_or_default();
                    let file = dest.rsplit('/').next().unwrap_or_default();
                    let svg = figures
                        .iter()
                        .find(|f| f.file == file)
                        .map(|f| inline_svg(&f.bytes))
                        .ok_or_else(|| format!("the figure {file} was not drawn"))?;
                    events.push(Event::Html(CowStr::from(format!(
                        "<figure>{svg}<figcaption>{}</figcaption></figure>",
                        escape(&caption)
                    ))));
                }
                Event::Text(t) if in_image.is_some() => caption.push_str(&t),
                Event::Start(Tag::Heading { .. }) => {
                    in_heading = true;
                    heading.clear();
                    if in_cautions {
                        events.push(Event::Html("</div>".into()));
                        in_cautions = false;
                    }
                    events.push(event);
                }
                Event::Text(t) if in_heading => {
                    heading.push_str(&t);
                    events.push(Event::Text(t));
                }
                Event::End(TagEnd::Heading(level)) => {
                    in_heading = false;
                    events.push(Event::End(TagEnd::Heading(level)));
                    if heading == "Cautions" {
                        events.push(Event::Html("<div class=\"caution\">".into()));
                        in_cautions = true;
                    }
                }
                // A paragraph that holds only a figure is the figure (a <figure> cannot sit in
                // a <p>).
                Event::End(TagEnd::Paragraph)
                    if matches!(
                        events.as_slice(),
                        [.., Event::Start(Tag::Paragraph), Event::Html(h)] if h.starts_with("<figure>")
                    ) =>
                {
                    let figure = events.pop();
                    events.pop();
                    events.extend(figure);
                }
                other => events.push(other),
            }
        }
        if in_cautions {
            events.push(Event::Html("</div>".into()));
        }
        let mut body = String::new();
        html::push_html(&mut body, events.into_iter());
        let page = format!(
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
             <meta name=\"generator\" content=\"radforce {}\">\n<title>{}</title>\n\
             <style>{STYLE}</style>\n</head>\n<body>\n<main>\n{body}</main>\n\
             <footer>Made by radforce {} from the scenario's stated distributions. A planning \
             estimate, not an accredited calibration (ISO/IEC 17025).</footer>\n</body>\n</html>\n",
            env!("CARGO_PKG_VERSION"),
            escape(&title),
            env!("CARGO_PKG_VERSION"),
        );
        Ok(page.into_bytes())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_and_scales_figures() {
        assert_eq!(escape("<b>&\"'"), "&lt;b&gt;&amp;&quot;&#39;");
        let svg = inline_svg(
            b"<?xml version=\"1.0\"?>\n<svg width=\"800\" height=\"500\" xmlns=\"x\"></svg>",
        );
        assert!(svg.starts_with("<svg viewBox=\"0 0 800 500\""), "{svg}");
    }
}
