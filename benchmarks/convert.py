"""A 1920×1080 Gabor patch defined in DKL, converted to 8-bit device RGB three ways, timed side by side.

- stimlab: ``Background.to_device`` (one composed affine map, then the exact nearest level in light);
- bare: the least work possible, written inline (one matrix product and one look-up in a 4096-entry table);
- generic: the same chain composed from colour-science's generic functions (``vecmul`` for each matrix step,
  ``gamma_function`` for the inverse transfer curve).

Last line: ``ratio_vs_bare=… ratio_vs_generic=… max_level_diff=… peak_memory_over_image=…``.
Targets: ratio_vs_bare ≤ 2, ratio_vs_generic ≤ 1/3 (generic ≥ 3× slower), max_level_diff ≤ 1, peak memory under
4× the output image's float64 size.
"""

from __future__ import annotations

import sys
import time
import tracemalloc
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from stimlab.colorimetry._colour import colour  # noqa: E402
from stimlab.colorimetry.display import DisplayModel  # noqa: E402
from stimlab.colorimetry.stimulus import Background  # noqa: E402
from stimlab.profiles.demo import demo_profile  # noqa: E402
from stimlab.profiles.profile import build_profile, transfer_entry  # noqa: E402

WIDTH, HEIGHT = 1920, 1080
REPEATS = 9


def gabor_DKL(background: Background) -> np.ndarray:
    """An L−M and S Gabor (σ 150 px, 60 px period) at 90 % of the display's headroom, on the background."""
    y, x = np.mgrid[0:HEIGHT, 0:WIDTH].astype(float)
    x -= WIDTH / 2
    y -= HEIGHT / 2
    envelope = np.exp(-(x**2 + y**2) / (2 * 150.0**2)) * np.cos(2 * np.pi * x / 60.0)
    image = np.zeros((HEIGHT, WIDTH, 3))
    image[..., 1] = 0.6 * background.DKL_limits[1, 1] * envelope
    image[..., 2] = 0.3 * background.DKL_limits[2, 1] * envelope
    return image


def interleaved_best_times(functions, argument):
    """Best time of each function, the runs interleaved so that machine noise falls on all of them alike."""
    best = [float("inf")] * len(functions)
    results = [None] * len(functions)
    for _ in range(REPEATS):
        for i, function in enumerate(functions):
            start = time.perf_counter()
            results[i] = function(argument)
            best[i] = min(best[i], time.perf_counter() - start)
    return best, results


def eight_bit_demo() -> dict:
    """The demo display driven with 8-bit input: its fitted 10-bit curves sampled at 8-bit levels."""
    profile = demo_profile()
    ten_bit = DisplayModel(profile)
    levels = np.unique(np.round(255 * np.linspace(0, 1, 18) ** 1.5))
    transfer = {}
    for channel, curve in zip(("red", "green", "blue"), ten_bit.transfers):
        full = profile["transfer"][channel]["measured"]["luminance_cd_m2"]
        luminance = full[0] + (full[-1] - full[0]) * curve.forward(levels / 255)
        transfer[channel] = transfer_entry(levels, luminance, 8)
    primaries = profile["primaries"]
    wavelengths = np.array(primaries["wavelength_nm"])
    black = np.array(primaries["black"])
    measured = np.array([primaries[c] for c in ("red", "green", "blue")]).T + black[:, None]
    return build_profile("demo display at 8 bits", transfer=transfer, bits=8, spectra=(wavelengths, measured, black),
                         size_cm=profile["size_cm"], size_px=profile["size_px"])


def main() -> None:
    model = DisplayModel(eight_bit_demo(), "ss2")
    background = Background(model, [0.5, 0.5, 0.5])
    image = gabor_DKL(background)
    A, b = background.affine_to_RGB_linear("dkl")

    # Bare: inverse transfer curve tabulated once at 4096 linear values, then index.
    grid = np.linspace(0, 1, 4096)
    lut = np.stack([np.rint(t.inverse(grid) * model.d_max) for t in model.transfers]).astype(np.uint16)

    def bare(img):
        rgb = A @ img.reshape(-1, 3).T + b[:, None]  # the fast layout for a 3×3 product
        index = np.rint(rgb * 4095).astype(np.intp)
        return np.stack([lut[c][index[c]] for c in range(3)], axis=-1).reshape(img.shape)

    gog = [t.parameters() for t in model.transfers]

    def generic(img):
        delta_LMS = colour.algebra.vecmul(background.D, img)
        LMS = delta_LMS + background.LMS_0
        rgb = colour.algebra.vecmul(model.M_LMS_inverse, LMS - model.LMS_black)
        levels = np.empty(rgb.shape, dtype=np.int64)
        for c, p in enumerate(gog):
            x = (colour.gamma_function(rgb[..., c], 1 / p["gamma"], "Clamp") - p["offset"]) / p["gain"]
            levels[..., c] = np.rint(np.clip(x, 0, 1) * model.d_max)
        return levels

    ours = lambda img: background.to_device("dkl", img)  # noqa: E731
    (t_ours, t_bare, t_generic), (levels_ours, levels_bare, levels_generic) = interleaved_best_times(
        [ours, bare, generic], image)

    tracemalloc.start()
    ours(image)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    output_float64 = image.size * 8

    diff_bare = int(np.max(np.abs(levels_ours.astype(int) - levels_bare)))
    diff_generic = int(np.max(np.abs(levels_ours - levels_generic)))
    print(f"image {WIDTH}x{HEIGHT}, best of {REPEATS}")
    print(f"  stimlab  {t_ours * 1e3:8.1f} ms")
    print(f"  bare     {t_bare * 1e3:8.1f} ms   (max level difference {diff_bare})")
    print(f"  generic  {t_generic * 1e3:8.1f} ms   (max level difference {diff_generic})")
    print(f"  peak memory of the stimlab call {peak / 2**20:.1f} MiB = {peak / output_float64:.2f}× the output "
          "image in float64")
    print(f"ratio_vs_bare={t_ours / t_bare:.2f} ratio_vs_generic={t_ours / t_generic:.2f} "
          f"max_level_diff={max(diff_bare, diff_generic)} peak_memory_over_image={peak / output_float64:.2f}")


if __name__ == "__main__":
    main()
