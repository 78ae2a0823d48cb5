"""Write the tables glowtemp ships in core/data/, so a cold `glowtemp measure` computes none.

- cie1931_2deg_cmf.csv: the CIE 1931 2-degree colour-matching functions (CIE 015:2018, 360 to
  830 nm by 1 nm), exported from colour-science's copy: the measuring path must not import
  colour-science, which takes seconds to import.
- blackbody_xyz.npy: blackbody XYZ on glowtemp's 1 K grid (700-4000 K), integrated from those
  CMFs by glowtemp.physics.locus.blackbody_xyz (about 40 ms of work saved at every start).
- camera_population.npz: the camera prior, glowtemp.render.population_build.build_population (derived
  from the measured cameras in core/data/camera_sensitivities, Apache-2.0; see core/data/NOTICE.md).

tests/test_locus.py checks the first two against colour-science and a fresh integration;
tests/test_population.py rebuilds members of the third and compares.

Run: python scripts/export_tables.py
"""

from pathlib import Path

import colour
import numpy as np

DATA = Path(__file__).resolve().parent.parent / "core" / "data"


def main():
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    table = np.column_stack([cmfs.wavelengths, cmfs.values])
    header = "wavelength_nm,x_bar,y_bar,z_bar  # CIE 015:2018 CIE 1931 2-degree standard observer"
    out = DATA / "cie1931_2deg_cmf.csv"
    np.savetxt(out, table, fmt=["%.0f", "%.6e", "%.6e", "%.6e"], delimiter=",", header=header)
    print(f"wrote {out} ({len(table)} rows)")

    from glowtemp.physics.locus import blackbody_xyz, table_grid

    out = DATA / "blackbody_xyz.npy"
    np.save(out, blackbody_xyz(table_grid()))
    print(f"wrote {out}")

    from glowtemp.render.population_build import build_population

    out = DATA / "camera_population.npz"
    arrays = build_population()
    np.savez_compressed(out, **arrays)
    print(f"wrote {out} ({arrays['maker'].size} members, {out.stat().st_size / 1e6:.1f} MB)")


if __name__ == "__main__":
    main()
