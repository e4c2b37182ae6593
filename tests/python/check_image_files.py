#!/usr/bin/env python3
"""Reads umbral's image files with numpy and astropy, independently of the Rust writers.

Usage: check_image_files.py ARRAY.npy [IMAGE.fits ...] [IMAGE.png ...]

The .npy file is the reference: each FITS file must hold the same values with its rows in
FITS order (first row at the bottom), and each PNG must be N x N 8-bit RGB. For every FITS
file the script also checks the coordinates through astropy.wcs: the world coordinates of
every pixel against the screen grid alpha_j = -F/2 + (j + 1/2) F/N, beta_i = F/2 - (i + 1/2) F/N
(F = FIELDM, N pixels, row i counted from the top as in the .npy array), in M for the linear
axes ALPHA/BETA, and as RA = -alpha theta_g, Dec = beta theta_g (degrees, small angles about
the placeholder position 0, 0) for the RA---SIN/DEC--SIN axes; and the pixel scale from
astropy.wcs.utils.proj_plane_pixel_scales against PIXSIZEM (times THETAG for the sky).

Needs numpy and astropy. Prints one line per check and a closing 'N passed, M failed' line;
exits 1 if any check failed, 2 on bad usage.
"""

import struct
import sys
import warnings

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
from astropy.wcs.utils import proj_plane_pixel_scales

UAS_PER_DEG = 3.6e9
RESULTS = []


def check(name, ok, detail=""):
    RESULTS.append(bool(ok))
    print(f"{'ok  ' if ok else 'FAIL'} {name}{': ' + detail if detail else ''}")


def screen_grid(n, field):
    """alpha_j and beta_i of the pixel centres, numpy order (row 0 on top)."""
    h = field / n
    alpha = -field / 2 + (np.arange(n) + 0.5) * h
    beta = field / 2 - (np.arange(n) + 0.5) * h
    return alpha, beta


def check_fits(path, reference):
    with fits.open(path) as hdul:
        check(f"{path}: one primary HDU", len(hdul) == 1)
        try:
            hdul.verify("exception")  # astropy's check of the standard's rules
            problem = ""
        except Exception as e:  # noqa: BLE001 - any complaint is a failure
            problem = str(e)
        check(f"{path}: astropy verifies it", not problem, problem)
        header = hdul[0].header
        data = hdul[0].data
        n = reference.shape[0]
        check(f"{path}: BITPIX -64", header["BITPIX"] == -64)
        check(f"{path}: shape", data.shape == reference.shape, f"{data.shape}")
        # FITS rows run from the bottom: flipping them gives the .npy (top-first) order.
        check(f"{path}: values, rows from the bottom", np.array_equal(np.flipud(data), reference))
        field = header["FIELDM"]
        pixel = header["PIXSIZEM"]
        check(f"{path}: PIXSIZEM = FIELDM / N", abs(pixel - field / n) <= 1e-12 * pixel)
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # any FITSFixedWarning is a failure
            try:
                wcs = WCS(header)
                warned = ""
            except Warning as w:
                warned = str(w)
        check(f"{path}: astropy reads the WCS without a warning", not warned, warned)
        if warned:
            wcs = WCS(header)
        alpha, beta = screen_grid(n, field)
        # numpy row i is FITS (0-based) row n - 1 - i; column j is column j.
        rows, cols = np.mgrid[0:n, 0:n]
        world = wcs.pixel_to_world_values(cols, n - 1 - rows)
        scales = proj_plane_pixel_scales(wcs)
        if "THETAG" in header:
            theta_g = header["THETAG"]
            ra, dec = world
            ra = np.where(ra > 180.0, ra - 360.0, ra)
            expected_ra = -alpha[cols] * theta_g / UAS_PER_DEG
            expected_dec = beta[rows] * theta_g / UAS_PER_DEG
            # The SIN projection departs from the plane by ~1e-17 of the angle this close to
            # the reference point, but wcslib works in degrees on the sphere, with an absolute
            # rounding of some 1e-14 deg (360 times the double epsilon): a thousandth of a
            # pixel is the tolerance.
            expected = pixel * theta_g / UAS_PER_DEG
            for label, got, want in (("RA = -alpha theta_g", ra, expected_ra),
                                     ("Dec = beta theta_g", dec, expected_dec)):
                worst = np.abs(got - want).max()
                check(f"{path}: {label}", worst < 1e-3 * expected,
                      f"max |diff| {worst:.3g} deg = {worst / expected:.2g} pixel")
            check(
                f"{path}: pixel scale {expected:.6g} deg = {pixel * theta_g:.6g} uas",
                np.allclose(scales, expected, rtol=1e-9),
                f"astropy {scales}",
            )
            check(
                f"{path}: PIXUAS",
                abs(header["PIXUAS"] - pixel * theta_g) <= 1e-12 * pixel * theta_g,
            )
        else:
            a, b = world
            check(f"{path}: axis 1 = alpha", np.allclose(a, alpha[cols], rtol=0, atol=1e-12 * field))
            check(f"{path}: axis 2 = beta", np.allclose(b, beta[rows], rtol=0, atol=1e-12 * field))
            check(
                f"{path}: pixel scale {pixel} M",
                np.allclose(scales, pixel, rtol=1e-12),
                f"astropy {scales}",
            )


def check_png(path, n):
    with open(path, "rb") as f:
        head = f.read(33)
    check(f"{path}: PNG signature", head[:8] == b"\x89PNG\r\n\x1a\n")
    width, height, depth, colour = struct.unpack(">IIBB", head[16:26])
    check(f"{path}: {n} x {n}", (width, height) == (n, n), f"{width} x {height}")
    check(f"{path}: 8-bit RGB", (depth, colour) == (8, 2), f"depth {depth}, colour type {colour}")


def main(argv):
    if len(argv) < 2 or not argv[1].endswith(".npy"):
        print(__doc__.splitlines()[2], file=sys.stderr)
        return 2
    reference = np.load(argv[1])
    n = reference.shape[0]
    check(f"{argv[1]}: square float64 array", reference.dtype == np.float64
          and reference.ndim == 2 and reference.shape == (n, n), f"{reference.dtype} {reference.shape}")
    check(f"{argv[1]}: C order", reference.flags["C_CONTIGUOUS"])
    for path in argv[2:]:
        if path.endswith((".fits", ".fit", ".fts")):
            check_fits(path, reference)
        elif path.endswith(".png"):
            check_png(path, n)
        else:
            print(f"unknown file kind: {path}", file=sys.stderr)
            return 2
    failed = RESULTS.count(False)
    print(f"{len(RESULTS) - failed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
