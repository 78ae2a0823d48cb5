"""Write the CIE 1931 2-degree colour-matching functions that glowtemp ships in core/data/.

The measuring path must not import colour-science (it takes seconds to import), so the
CIE 015:2018 table (360 to 830 nm in 1 nm steps) is exported once from colour-science's
copy. tests/test_locus.py checks the shipped file against colour-science.

Run: python scripts/export_cmf_table.py
"""

from pathlib import Path

import colour
import numpy as np

OUT = Path(__file__).resolve().parent.parent / "core" / "data" / "cie1931_2deg_cmf.csv"


def main():
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    table = np.column_stack([cmfs.wavelengths, cmfs.values])
    header = "wavelength_nm,x_bar,y_bar,z_bar  # CIE 015:2018 CIE 1931 2-degree standard observer"
    np.savetxt(OUT, table, fmt=["%.0f", "%.6e", "%.6e", "%.6e"], delimiter=",", header=header)
    print(f"wrote {OUT} ({len(table)} rows)")


if __name__ == "__main__":
    main()
