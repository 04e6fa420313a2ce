"""Reference check: fulcrum's figure files read back by Pillow (python3-pil)
and xml.etree.
Usage: check_figure_files.py DIR SCALE   a.{svg,png}, t.png, c.png written by the test
       check_figure_files.py DIR rendered   rendered.png: a.pdf rendered by pdftoppm at 96 dpi
a: the sample figure (400 x 300 canvas units); t: black text on white;
c: a 2 x 2 red/blue checkerboard raster over (50..150, 50..150)."""
import sys
import xml.etree.ElementTree as ET

from PIL import Image

d, what = sys.argv[1], sys.argv[2]
bad = []


def not_blank(path, size):
    im = Image.open(path)
    im.load()
    print(f"{path}: {im.size} {im.mode}")
    if im.size != size:
        bad.append(f"{path}: size {im.size} != {size}")
    grey = im.convert("L")
    lo, hi = grey.getextrema()
    if hi - lo < 100:
        bad.append(f"{path}: blank (grey levels {lo}..{hi})")
    return im


if what == "rendered":
    im = not_blank(d + "/rendered.png", (400, 300)).convert("RGB")
    # The colour map and the text show: many colours, some dark pixels.
    if len(im.getcolors(1 << 20) or []) < 20:
        bad.append("rendered PDF has too few colours for a colour-mapped raster")
else:
    s = float(what)
    size = (round(400 * s), round(300 * s))
    im = not_blank(d + "/a.png", size)
    if im.mode != "RGB":
        bad.append(f"a.png mode {im.mode}")
    root = ET.parse(d + "/a.svg").getroot()
    if not root.tag.endswith("svg") or root.get("width") != "400px":
        bad.append(f"a.svg root {root.tag} width {root.get('width')}")
    if not [e for e in root.iter() if e.tag.endswith("image")]:
        bad.append("a.svg holds no raster image")
    # Text: dark glyph pixels on white in the text-only figure.
    t = not_blank(d + "/t.png", (round(200 * s), round(40 * s))).convert("L")
    dark = sum(1 for v in t.getdata() if v < 100)
    print(f"t.png: {dark} dark pixels")
    if dark < 200:
        bad.append(f"t.png: text not drawn ({dark} dark pixels)")
    # Raster pixels are sharp: inside the image only the two exact colours.
    c = Image.open(d + "/c.png").convert("RGB")
    box = c.crop((round(50 * s), round(50 * s), round(150 * s), round(150 * s)))
    colours = sorted(col for _, col in box.getcolors(1 << 16))
    print("c.png colours inside the raster:", colours)
    if colours != [(0, 0, 255), (255, 0, 0)]:
        bad.append(f"c.png: raster smoothed or wrong, colours {colours[:6]}")
    if c.getpixel((round(75 * s), round(75 * s))) != (255, 0, 0) or \
            c.getpixel((round(125 * s), round(75 * s))) != (0, 0, 255):
        bad.append("c.png: checkerboard not in place (row 0: red, blue)")
for b in bad[:10]:
    print(b)
print("figure files:", "FAIL" if bad else "ok")
sys.exit(1 if bad else 0)
