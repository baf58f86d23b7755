"""Write the demo display's measurement files: an invented LCD in an invented lab.

The display "Vale Street B12 LCD" belongs to the fictional Vale Street Colour Vision Laboratory. Its primary spectra
are smooth synthetic curves (skewed Gaussians with the widths typical of a white-LED-backlit LCD) scaled to
plausible luminances, and its 10-bit transfer measurements follow a gain-offset-gamma curve with 0.3 % seeded noise.
Run ``python -m stimlab.data.demo.synthesise`` to regenerate them; the output is deterministic.
"""

from pathlib import Path

import numpy as np

from stimlab.colorimetry.observers import K_M, observer

HERE = Path(__file__).parent
WAVELENGTHS = np.arange(380.0, 782.0, 2.0)
PEAKS = {"red": (612.0, 13.0, 1.6), "green": (536.0, 19.0, 1.0), "blue": (452.0, 10.0, 0.8)}
LUMINANCE = {"red": 29.0, "green": 86.0, "blue": 7.5}
BLACK_LUMINANCE = 0.35
TRANSFER = {"red": (1.045, 2.24), "green": (1.038, 2.19), "blue": (1.052, 2.31)}


def _band(peak, width, skew):
    sigma = np.where(WAVELENGTHS > peak, width * skew, width)
    return np.exp(-0.5 * ((WAVELENGTHS - peak) / sigma) ** 2)


def _luminance(spectrum):
    obs = observer("ss2")
    V = np.interp(obs.wavelengths, WAVELENGTHS, spectrum, left=0, right=0) @ obs.luminous_efficiency
    return K_M * V


def main():
    bands = {c: _band(*PEAKS[c]) for c in PEAKS}
    # A broad phosphor-converted tail under green and red, as white-LED backlights have.
    bands["green"] += 0.06 * _band(590.0, 40.0, 1.0)
    bands["red"] += 0.04 * _band(560.0, 30.0, 1.0)
    spectra = {c: bands[c] * LUMINANCE[c] / _luminance(bands[c]) for c in bands}
    leak = sum(spectra.values())
    black = leak * BLACK_LUMINANCE / _luminance(leak)
    rows = ["wavelength_nm,red,green,blue,black"]
    for i, wl in enumerate(WAVELENGTHS):
        # Primaries as measured: each includes the black emission under it.
        values = [spectra[c][i] + black[i] for c in ("red", "green", "blue")] + [black[i]]
        rows.append(f"{wl:g}," + ",".join(f"{v:.6e}" for v in values))
    (HERE / "vale_street_b12_spectra.csv").write_text("\n".join(rows) + "\n")

    rng = np.random.default_rng(20261124)
    # A 10-bit panel, measured more densely near black where the curve bends.
    levels = np.unique(np.round(1023 * np.linspace(0, 1, 21) ** 1.5)).astype(int)
    rows = ["channel,level,luminance_cd_m2"]
    for channel, (gain, gamma) in TRANSFER.items():
        y = np.clip(gain * levels / 1023 + (1 - gain), 0, None) ** gamma
        noise = 1 + 0.003 * rng.standard_normal(levels.size)
        noise[[0, -1]] = 1
        luminance = BLACK_LUMINANCE + LUMINANCE[channel] * y * noise
        luminance = np.maximum.accumulate(luminance)
        rows += [f"{channel},{d},{v:.4f}" for d, v in zip(levels, luminance)]
    (HERE / "vale_street_b12_transfer.csv").write_text("\n".join(rows) + "\n")


if __name__ == "__main__":
    main()
