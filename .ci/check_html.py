#!/usr/bin/env python3
"""Render radforce's HTML report in headless Chromium and check that it is not blank.

Usage: check_html.py CHROMIUM REPORT.html OUTDIR

Chromium prints the page to PDF (A4, as a reader would from the browser) and takes a screenshot
of its first screen. The check fails when Chromium fails, when the PDF is not a PDF or has no
page, when the screenshot is (nearly) blank (fewer than 2 % of its pixels differ from white), or
when a table or figure would be cut on A4: laid out in a window as wide as the printed A4 text
(210 mm less two 14 mm margins = 688 CSS px, with the larger screen fonts), no table, figure or
the page itself may reach beyond that width. Chromium measures it: a copy of the report (never
the report itself, which carries no script) gets a line of script that writes the widths into
the title, read back from --dump-dom.
"""
import os
import re
import subprocess
import sys

from PIL import Image

FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
    "--hide-scrollbars",
]


def chromium(exe, profile, *args):
    cmd = [exe, *FLAGS, f"--user-data-dir={profile}", *args]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=180)
    if proc.returncode != 0:
        sys.exit(f"chromium failed ({proc.returncode}): {proc.stderr[-2000:]}")
    return proc.stdout


def main():
    exe, report, out = sys.argv[1], os.path.abspath(sys.argv[2]), sys.argv[3]
    os.makedirs(out, exist_ok=True)
    url = "file://" + report
    pdf = os.path.join(out, "report.pdf")
    png = os.path.join(out, "report.png")
    chromium(exe, os.path.join(out, "profile-pdf"), "--no-pdf-header-footer",
             f"--print-to-pdf={pdf}", url)
    chromium(exe, os.path.join(out, "profile-png"), "--window-size=1100,1400",
             f"--screenshot={png}", url)
    data = open(pdf, "rb").read()
    pages = len(re.findall(rb"/Type\s*/Page[^s]", data))
    if not data.startswith(b"%PDF") or pages < 1:
        sys.exit(f"{pdf}: not a PDF with pages ({len(data)} bytes, {pages} pages)")
    img = Image.open(png).convert("L")
    hist = img.histogram()
    total = sum(hist)
    inked = total - sum(hist[245:])
    share = inked / total
    if share < 0.02:
        sys.exit(f"{png}: the page looks blank ({share:.2%} of the pixels are not white)")
    # Nothing wider than the A4 text width.
    probe = os.path.join(out, "probe.html")
    text = open(report, encoding="utf-8").read()
    script = ("<script>const d = document.documentElement; const r = Math.max(0, ..."
              "Array.from(document.querySelectorAll('table, figure, svg, pre'))"
              ".map(e => e.getBoundingClientRect().right));"
              "document.title = 'WIDTHS ' + d.scrollWidth + ' ' + d.clientWidth + ' ' + Math.ceil(r);"
              "</script>")
    open(probe, "w", encoding="utf-8").write(text.replace("</body>", script + "</body>"))
    dom = chromium(exe, os.path.join(out, "profile-dom"), "--window-size=688,1000",
                   "--dump-dom", "file://" + os.path.abspath(probe))
    found = re.search(r"WIDTHS (\d+) (\d+) (\d+)", dom)
    if not found:
        sys.exit("could not measure the page widths")
    scroll, client, right = map(int, found.groups())
    if scroll > client or right > client:
        sys.exit(f"too wide for A4: the page is {scroll} px and its widest table or figure ends "
                 f"at {right} px in a {client} px window")
    print(f"{report}: renders in Chromium: {pages} A4 page(s) in PDF, "
          f"{share:.1%} of the first screen inked, widest table or figure {right} px of {client}")


if __name__ == "__main__":
    main()
