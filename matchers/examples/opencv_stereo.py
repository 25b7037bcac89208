#!/usr/bin/python3
"""OpenCV's StereoBM / StereoSGBM as an outside matcher for parallax.

Runs under Debian's Python with python3-opencv (/usr/bin/python3).

Per-pair mode (one process per pair):
    opencv_stereo.py --algo sgbm --left L.png --right R.png --out D.pfm --min 0 --max 63

Long-lived mode (JSON lines on stdin/stdout):
    opencv_stereo.py --serve [--algo bm ...]
    request: {"id": "...", "left": "...", "right": "...", "out": "...",
              "minDisparity": 0, "maxDisparity": 63, "params": {"algo": "bm", ...}}
    reply:   {"id": "...", "ok": true, "time_ms": 12.3}  or  {"id": "...", "ok": false, "error": "..."}
    Keys of "params" override the command-line flags for that request; the names
    are the flag names with dashes (e.g. "block-size") or camelCase ("blockSize").

Output: PFM, one channel, little-endian (scale -1), rows bottom to top, disparity
d = x_left - x_right in pixels; no answer = NaN.

Notes on OpenCV's conventions (OpenCV 4.x documentation of StereoMatcher):
  * compute() returns int16 fixed point, 16 x disparity (4 fractional bits);
    we divide by 16.
  * A pixel without an answer holds (minDisparity - 1) * 16; every value below
    minDisparity * 16 is mapped to NaN.
  * numDisparities must be a positive multiple of 16. The inclusive range
    [min, max] needs max - min + 1 levels; we round that up to the next multiple
    of 16, so OpenCV may answer up to 15 px beyond max (those answers are kept:
    they are what the matcher found).
  * StereoBM takes 8-bit single-channel images; both algorithms are given 8-bit
    gray images here (cv2.IMREAD_GRAYSCALE also reduces 16-bit files to 8 bits).
  * StereoBM's block size must be odd in 5..255; SGBM's odd and >= 1.
  * SGBM runs the full 8-path variant (MODE_HH). P1 and P2 default to
    8 * blockSize^2 and 32 * blockSize^2 (one channel), OpenCV's suggested values.
"""
import argparse
import json
import sys
import time

import cv2
import numpy as np


def write_pfm(path, disp):
    """Little-endian single-channel PFM, rows stored bottom to top."""
    h, w = disp.shape
    with open(path, "wb") as f:
        f.write(b"Pf\n%d %d\n-1.0\n" % (w, h))
        f.write(np.ascontiguousarray(np.flipud(disp), dtype="<f4").tobytes())


def num_levels(min_d, max_d):
    n = max_d - min_d + 1
    return max(16, ((n + 15) // 16) * 16)


def make_matcher(o, min_d, max_d):
    nd = num_levels(min_d, max_d)
    bs = int(o["block_size"])
    if o["algo"] == "bm":
        if bs < 5 or bs > 255 or bs % 2 == 0:
            raise ValueError("StereoBM needs an odd block size in 5..255 (got %d)" % bs)
        m = cv2.StereoBM_create(numDisparities=nd, blockSize=bs)
        m.setMinDisparity(min_d)
        m.setUniquenessRatio(int(o["uniqueness"]))
        m.setTextureThreshold(int(o["texture_threshold"]))
        m.setPreFilterCap(int(o["pre_filter_cap"]))
        m.setSpeckleWindowSize(int(o["speckle_window"]))
        m.setSpeckleRange(int(o["speckle_range"]))
        m.setDisp12MaxDiff(int(o["disp12_max_diff"]))
        return m
    if o["algo"] == "sgbm":
        if bs < 1 or bs % 2 == 0:
            raise ValueError("StereoSGBM needs an odd block size >= 1 (got %d)" % bs)
        p1 = int(o["p1"]) if int(o["p1"]) > 0 else 8 * bs * bs
        p2 = int(o["p2"]) if int(o["p2"]) > 0 else 32 * bs * bs
        if p2 <= p1:
            raise ValueError("SGBM needs p2 > p1 (got p1=%d, p2=%d)" % (p1, p2))
        return cv2.StereoSGBM_create(
            minDisparity=min_d,
            numDisparities=nd,
            blockSize=bs,
            P1=p1,
            P2=p2,
            disp12MaxDiff=int(o["disp12_max_diff"]),
            preFilterCap=int(o["pre_filter_cap"]),
            uniquenessRatio=int(o["uniqueness"]),
            speckleWindowSize=int(o["speckle_window"]),
            speckleRange=int(o["speckle_range"]),
            mode=cv2.STEREO_SGBM_MODE_HH,
        )
    raise ValueError("unknown algo %r (bm or sgbm)" % o["algo"])


def read_gray(path):
    img = cv2.imread(path, cv2.IMREAD_GRAYSCALE)
    if img is None:
        raise ValueError("cannot read image %s" % path)
    return img


def match(o, left_path, right_path, out_path, min_d, max_d):
    """Returns the match time in ms (compute() and the conversion only)."""
    left = read_gray(left_path)
    right = read_gray(right_path)
    if left.shape != right.shape:
        raise ValueError("left %s and right %s differ in size" % (left.shape, right.shape))
    min_d = int(min_d)
    max_d = int(max_d)
    if max_d < min_d:
        raise ValueError("empty disparity range [%d, %d]" % (min_d, max_d))
    m = make_matcher(o, min_d, max_d)
    t0 = time.perf_counter()
    raw = m.compute(left, right)
    disp = raw.astype(np.float32) / 16.0
    disp[raw < min_d * 16] = np.nan
    ms = (time.perf_counter() - t0) * 1000.0
    write_pfm(out_path, disp)
    return ms


OPTION_NAMES = [
    "algo", "block_size", "p1", "p2", "uniqueness", "speckle_window", "speckle_range",
    "disp12_max_diff", "pre_filter_cap", "texture_threshold",
]


def normalise_key(k):
    """block-size, blockSize and block_size all name the same option."""
    out = []
    for ch in k.replace("-", "_"):
        if ch.isupper():
            out.append("_" + ch.lower())
        else:
            out.append(ch)
    return "".join(out)


def serve(base):
    for line in sys.stdin:
        line = line.strip()
        if not line:
            continue
        req_id = None
        try:
            req = json.loads(line)
            req_id = req.get("id")
            o = dict(base)
            for k, v in (req.get("params") or {}).items():
                key = normalise_key(k)
                if key in OPTION_NAMES:
                    o[key] = v
            ms = match(o, req["left"], req["right"], req["out"], req["minDisparity"], req["maxDisparity"])
            reply = {"id": req_id, "ok": True, "time_ms": ms}
        except Exception as e:  # one bad request must not end the server
            reply = {"id": req_id, "ok": False, "error": "%s: %s" % (type(e).__name__, e)}
        sys.stdout.write(json.dumps(reply) + "\n")
        sys.stdout.flush()


def main():
    ap = argparse.ArgumentParser(description="OpenCV StereoBM / StereoSGBM for parallax")
    ap.add_argument("--algo", choices=["bm", "sgbm"], default="sgbm")
    ap.add_argument("--block-size", dest="block_size", type=int, default=None,
                    help="odd window side (default 9 for bm, 5 for sgbm)")
    ap.add_argument("--p1", type=int, default=0, help="SGBM small-change penalty (0 = 8 * block^2)")
    ap.add_argument("--p2", type=int, default=0, help="SGBM large-change penalty (0 = 32 * block^2)")
    ap.add_argument("--uniqueness", type=int, default=10, help="uniqueness ratio in percent")
    ap.add_argument("--speckle-window", dest="speckle_window", type=int, default=0, help="0 disables speckle filtering")
    ap.add_argument("--speckle-range", dest="speckle_range", type=int, default=2)
    ap.add_argument("--disp12-max-diff", dest="disp12_max_diff", type=int, default=1, help="left-right check, -1 disables")
    ap.add_argument("--pre-filter-cap", dest="pre_filter_cap", type=int, default=31)
    ap.add_argument("--texture-threshold", dest="texture_threshold", type=int, default=10, help="StereoBM only")
    ap.add_argument("--left")
    ap.add_argument("--right")
    ap.add_argument("--out")
    ap.add_argument("--min", type=int, default=0)
    ap.add_argument("--max", type=int, default=63)
    ap.add_argument("--serve", action="store_true", help="long-lived JSON-lines mode")
    a = ap.parse_args()
    if a.block_size is None:
        a.block_size = 9 if a.algo == "bm" else 5
    base = {k: getattr(a, k) for k in OPTION_NAMES}
    if a.serve:
        serve(base)
        return 0
    if not (a.left and a.right and a.out):
        ap.error("--left, --right and --out are required without --serve")
    try:
        match(base, a.left, a.right, a.out, a.min, a.max)
    except Exception as e:
        sys.stderr.write("opencv_stereo: %s: %s\n" % (type(e).__name__, e))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
