"""The soil demo's report renders in a real browser (Debian's chromium,
headless) without errors, offline, with its plots present and titled.

Runs `sillstone run` on demo-sites/soil-yard into a temporary folder, then:
  - checks the HTML references nothing outside itself (no http(s)/file URLs,
    no <script src>, no <link>, every <img>/<image> inline as data: URIs);
  - renders it with chromium --headless --screenshot to a PNG (must exist and
    be larger than a blank page) and --dump-dom (the DOM after load);
  - counts the inline SVG figures and reads their <title> elements, which
    must include the histogram, the variogram, the variogram surface, the
    cross-validation scatter and errors, the estimate, the kriging standard
    deviation and the exceedance-probability maps.
Usage: report_in_browser.py PATH/TO/sillstone
"""
import os
import re
import shutil
import subprocess
import sys
import tempfile

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
EXPECTED_TITLES = [
    "Histogram of lead_mg_kg",
    "Sample locations coloured by lead_mg_kg",
    "Empirical variogram and fitted model",
    "Variogram surface",
    "Observed against estimated",
    "Standardised errors",
    "Estimate of lead_mg_kg",
    "Kriging standard deviation (log scale)",
    "Probability that lead_mg_kg exceeds 450",
]
CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def main():
    exe = sys.argv[1]
    browser = shutil.which("chromium")
    if not browser:
        print("chromium is not installed (scripts/install-deps.sh installs it)")
        return 1
    problems = []
    with tempfile.TemporaryDirectory() as tmp:
        run = os.path.join(tmp, "run")
        subprocess.run([exe, "run", os.path.join(ROOT, "demo-sites", "soil-yard", "study.toml"),
                        "-o", run, "--quiet"], check=True, capture_output=True, text=True)
        report = os.path.join(run, "report.html")
        html = open(report, encoding="utf-8").read()
        for pattern, what in ((r'(?:src|href)\s*=\s*"(?:https?|file):', "an external URL"),
                              (r"<script[^>]*\bsrc=", "an external script"),
                              (r"<link\b", "a linked stylesheet"),
                              (r'<(?:img|image)\b[^>]*\b(?:src|href)="(?!data:)', "a non-inline image")):
            if re.search(pattern, html):
                problems.append(f"the report holds {what}")
        if "Caution." not in html:
            problems.append("the report has no caution paragraph")

        profile = os.path.join(tmp, "profile")
        png = os.path.join(tmp, "report.png")
        shot = subprocess.run([browser] + CHROMIUM_FLAGS + [f"--user-data-dir={profile}",
                              f"--screenshot={png}", "--window-size=1100,3000", "file://" + report],
                              capture_output=True, text=True, timeout=120)
        if shot.returncode != 0 or not os.path.exists(png):
            problems.append(f"chromium could not render the report (exit {shot.returncode}): {shot.stderr[-500:]}")
        elif os.path.getsize(png) < 50_000:
            problems.append(f"the screenshot is nearly empty ({os.path.getsize(png)} bytes)")
        dom = subprocess.run([browser] + CHROMIUM_FLAGS + [f"--user-data-dir={profile}", "--dump-dom",
                             "file://" + report], capture_output=True, text=True, timeout=120)
        if dom.returncode != 0:
            problems.append(f"chromium --dump-dom failed (exit {dom.returncode})")
        svgs = re.findall(r"<svg\b[^>]*>\s*<title>([^<]*)</title>", dom.stdout)
        titles = [t.replace("&amp;", "&") for t in svgs]
        for t in EXPECTED_TITLES:
            if t not in titles:
                problems.append(f"no plot titled {t!r} (found: {titles})")
        images = len(re.findall(r"<image\b[^>]*href=\"data:image/png;base64,", dom.stdout))
        if images < 4:
            problems.append(f"expected at least 4 inline raster images (maps and surface), found {images}")
    if problems:
        print("\n".join(problems))
        return 1
    print(f"report renders in chromium with {len(titles)} titled plots and {images} inline maps")
    return 0


if __name__ == "__main__":
    sys.exit(main())
