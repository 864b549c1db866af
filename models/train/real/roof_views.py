"""Views for hand-labelling real roof crops: each 125 x 125 px crop (0.2 m) enlarged 4x with a grid every 25 crop
px (5 m) numbered in crop pixels, so a labeller can read positions in crop pixel coordinates by eye.
Usage: python3 roof_views.py REALDATA SPLIT.json {valLabel|trainLabel} OUTDIR [START COUNT]"""
import json
import os
import sys

from PIL import Image, ImageDraw

SCALE = 4
MARGIN = 28


def view(src, dst):
    im = Image.open(src).convert("RGB")
    w, h = im.size
    big = im.resize((w * SCALE, h * SCALE), Image.BICUBIC)
    canvas = Image.new("RGB", (w * SCALE + 2 * MARGIN, h * SCALE + 2 * MARGIN), (255, 255, 255))
    canvas.paste(big, (MARGIN, MARGIN))
    d = ImageDraw.Draw(canvas)
    for v in range(0, w + 1, 25):
        p = MARGIN + v * SCALE
        d.line([(p, MARGIN), (p, MARGIN + h * SCALE)], fill=(255, 255, 0), width=1)
        d.line([(MARGIN, p), (MARGIN + w * SCALE, p)], fill=(255, 255, 0), width=1)
        d.text((p - 6, 4), str(v), fill=(0, 0, 0))
        d.text((p - 6, MARGIN + h * SCALE + 8), str(v), fill=(0, 0, 0))
        d.text((2, p - 5), str(v), fill=(0, 0, 0))
        d.text((MARGIN + w * SCALE + 4, p - 5), str(v), fill=(0, 0, 0))
    canvas.save(dst)


def main():
    real, split, key, out = sys.argv[1:5]
    names = json.load(open(split))[key]
    if len(sys.argv) > 6:
        s, n = int(sys.argv[5]), int(sys.argv[6])
        names = names[s:s + n]
    os.makedirs(out, exist_ok=True)
    for n in names:
        view(os.path.join(real, "roofs-pv-registry", "crops", n), os.path.join(out, n))
    print(len(names), "views in", out)


if __name__ == "__main__":
    main()
