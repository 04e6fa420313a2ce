"""Reference check: report.html rendered by headless Chromium (Debian
'chromium').

1. --dump-dom: the page parses, and every <figure> in the source holds an
   <img> whose source is an SVG data URI (decoded here and parsed by
   xml.etree) and that is present in the rendered DOM (each figure's id is
   found).
2. --screenshot: a PNG is written (checked with Pillow: non-blank).
3. --enable-logging=stderr --v=0: no console messages of level ERROR from
   the page ("CONSOLE" lines), no failed resource loads.
Usage: check_html_chromium.py REPORT.html SCREENSHOT.png
"""
import base64
import re
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

html, shot = sys.argv[1], sys.argv[2]
base = ["chromium", "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]
url = "file://" + html
errors = []
src = open(html, encoding="utf-8").read()
fig_ids = re.findall(r'<figure id="([^"]+)"', src)
if not fig_ids:
    errors.append("the page holds no figures")
if re.search(r'(src|href)="(https?:)?//', src):
    errors.append("the page refers to an external resource")
figures = re.findall(r'<figure id="([^"]+)"[^>]*>\s*<img src="data:image/svg\+xml;base64,([^"]+)"', src)
if len(figures) != len(fig_ids):
    errors.append(f"{len(figures)} of {len(fig_ids)} figures hold an SVG data URI image")
for fid, data in figures:
    try:
        root = ET.fromstring(base64.b64decode(data, validate=True))
        if not root.tag.endswith("svg"):
            errors.append(f"{fid}: the image is not an SVG document")
    except Exception as e:  # noqa: BLE001
        errors.append(f"{fid}: the image does not decode: {e}")

with tempfile.TemporaryDirectory() as prof:
    dom = subprocess.run(base + ["--user-data-dir=" + prof, "--dump-dom", url], capture_output=True, text=True,
                         timeout=120)
if dom.returncode != 0:
    errors.append(f"dump-dom exit {dom.returncode}")
rendered = dom.stdout
missing = [f for f in fig_ids if f'id="{f}"' not in rendered]
if missing:
    errors.append(f"figures missing from the rendered DOM: {missing}")
n_img = len(re.findall(r'<img src="data:image/svg\+xml;base64,', rendered))
if n_img < len(fig_ids):
    errors.append(f"{n_img} figure images rendered for {len(fig_ids)} figures")

with tempfile.TemporaryDirectory() as prof:
    run = subprocess.run(base + ["--user-data-dir=" + prof, "--enable-logging=stderr", "--v=0",
                                 "--window-size=1280,4000", "--screenshot=" + shot, url],
                         capture_output=True, text=True, timeout=120)
console = [l for l in run.stderr.splitlines() if "CONSOLE" in l or "Failed to load" in l
           or "net::ERR" in l]
if console:
    errors.append("console messages: " + " | ".join(console[:5]))
try:
    from PIL import Image
    im = Image.open(shot).convert("L")
    lo, hi = im.getextrema()
    if hi - lo < 50:
        errors.append("the screenshot is blank")
except Exception as e:  # noqa: BLE001
    errors.append(f"no screenshot: {e}")

print(f"{len(fig_ids)} figures, {n_img} figure images rendered")
for e in errors:
    print(e)
print("html:", "FAIL" if errors else "ok")
sys.exit(1 if errors else 0)
