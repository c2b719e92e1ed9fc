"""Corner positions of the rendered checkerboard views by a general-purpose
image library, scikit-image: Harris corner response, its peaks, then the
library's sub-pixel refinement. The result, skimage_corners.txt, is the
outside reference of the corner check in host-verify/tests/calibrate.rs.

Run:  python outside_corners.py host-verify/tests/data/calibrate
Needs scikit-image (pip install scikit-image); the versions used are
written into the output.
"""

import sys
from pathlib import Path

import numpy as np
import skimage
from skimage.feature import corner_harris, corner_peaks, corner_subpix
from skimage.io import imread


def main(folder: Path) -> None:
    lines = [
        "# Corners found by scikit-image %s (numpy %s, Python %d.%d):"
        % (skimage.__version__, np.__version__, *sys.version_info[:2]),
        "# corner_harris(sigma=1) -> corner_peaks(min_distance=3, threshold_rel=0.02)",
        "# -> corner_subpix(window_size=9); points it could not refine are left out.",
        "# view x y (px, pixel centres at integers)",
    ]
    for view in sorted(folder.glob("view*.png")):
        index = int(view.stem[4:])
        image = imread(view).astype(float) / 255.0
        response = corner_harris(image, sigma=1)
        peaks = corner_peaks(response, min_distance=3, threshold_rel=0.02)
        refined = corner_subpix(image, peaks, window_size=9)
        for row, col in refined:
            if np.isfinite(row) and np.isfinite(col):
                lines.append("%d %.6f %.6f" % (index, col, row))
    (folder / "skimage_corners.txt").write_text("\n".join(lines) + "\n")
    print("wrote", folder / "skimage_corners.txt")


if __name__ == "__main__":
    main(Path(sys.argv[1] if len(sys.argv) > 1 else "."))
