"""Make the binarization fixtures and their expected values from scikit-image.

Reference: scikit-image 0.26.0 (PyPI), skimage.filters.threshold_otsu and threshold_sauvola;
numpy and pillow from PyPI for the arrays and PNG files. Run with /tmp/rv/bin/python from this folder.
The test images are drawn here from a fixed seed (our own strokes, no outside content).
"""
import json

import numpy as np
from PIL import Image
from skimage.filters import threshold_otsu, threshold_sauvola

rng = np.random.default_rng(20261202)


def strokes(h, w, paper, ink, gradient):
    """Paper with a left-right lighting gradient, dark horizontal and slanted strokes, noise."""
    yy, xx = np.mgrid[0:h, 0:w]
    img = paper - gradient * xx / w + rng.normal(0, 6, (h, w))
    for _ in range(12):
        y0, x0 = rng.integers(4, h - 8), rng.integers(0, w - 20)
        length, thick = rng.integers(8, 40), rng.integers(1, 4)
        slope = rng.uniform(-0.6, 0.6)
        for dx in range(length):
            x = x0 + dx
            if x >= w:
                break
            y = int(y0 + slope * dx)
            img[max(0, y):min(h, y + thick), x] = ink + rng.normal(0, 8)
    for _ in range(10):  # dots
        y, x = rng.integers(2, h - 4), rng.integers(2, w - 4)
        img[y:y + 3, x:x + 3] = ink
    return np.clip(img, 0, 255).round().astype(np.uint8)


cases = {
    "even_paper": strokes(48, 80, 225, 40, 0),
    "shadowed": strokes(56, 96, 235, 60, 110),
    "low_contrast": strokes(40, 72, 180, 120, 30),
}
expected = {}
for name, img in cases.items():
    Image.fromarray(img).save(f"bin_{name}.png")
    t = threshold_otsu(img)
    sv = threshold_sauvola(img, window_size=15, k=0.2)
    paper = img > sv  # scikit-image convention: foreground (paper) above the threshold
    Image.fromarray(np.where(paper, 255, 0).astype(np.uint8)).save(f"bin_{name}_sauvola15.png")
    expected[name] = {"otsu_threshold": int(t)}
with open("binarize_expected.json", "w") as f:
    json.dump(expected, f, indent=1, sort_keys=True)
print(expected)
