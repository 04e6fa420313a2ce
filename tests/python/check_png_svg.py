"""Reference check: fulcrum's PNG encoder decoded by Pillow (python3-pil),
which verifies the zlib stream, Adler-32 and chunk CRCs, against the
pattern the test wrote; and the SVG figure parsed by xml.etree.
Usage: check_png_svg.py DIR NX NY"""
import sys
import xml.etree.ElementTree as ET

from PIL import Image

d, nx, ny = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
im = Image.open(d + "/a.png")
im.load()
bad = []
if im.size != (nx, ny) or im.mode != "RGB":
    bad.append(f"size/mode {im.size} {im.mode}")
px = im.load()
for y in range(ny):
    for x in range(nx):
        want = ((x * 7) % 256, y % 256, (x * y) % 256)
        if px[x, y] != want:
            bad.append(f"pixel {x},{y}: {px[x, y]} != {want}")
            break
root = ET.parse(d + "/a.svg").getroot()
if not root.tag.endswith("svg"):
    bad.append("root is not svg")
images = [e for e in root.iter() if e.tag.endswith("image")]
if not images:
    bad.append("colour bar image missing")
for b in bad[:10]:
    print(b)
print("png/svg:", "FAIL" if bad else "ok")
sys.exit(1 if bad else 0)
