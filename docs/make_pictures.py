"""Write docs/paper_figure.png, the README's picture of the paper figure.

Made from the invented demo compound zorbium lumide (demo_spectra/: not a real
material): its computed DOS, a model of that DOS with electronic and dilatation terms,
and its invented C_p data.  Run from the repository root:
``python docs/make_pictures.py`` (replaces the picture).
"""

from __future__ import annotations

import io
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # the source tree's modeheat, installed or not

from modeheat import read_heat_capacity, read_spectrum  # noqa: E402
from modeheat.figures import paper_figure  # noqa: E402
from modeheat.models import Dilatation, Electronic, PhononDOS  # noqa: E402

__all__ = ["main"]

#: Screen resolution of the README picture (double width: 700 px wide).
DPI = 100


def main() -> Path:
    """Draw the paper figure of the demo data and write it as docs/paper_figure.png."""
    dos = read_spectrum(ROOT / "demo_spectra" / "zorbium_lumide_dos.txt")
    cp = read_heat_capacity(ROOT / "demo_spectra" / "zorbium_lumide_cp.txt", atoms=2)
    # γ and A as the invented demo data were made with (demo_spectra/make_demo.py)
    model = PhononDOS(dos, name="model") + Electronic(gamma=5e-5) + Dilatation(A=2e-6)
    fig = paper_figure(dos, model, cp, width="double")
    fig.suptitle("zorbium lumide — invented demo data, not a real material", fontsize=8)
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=DPI)
    out = ROOT / "docs" / "paper_figure.png"
    out.write_bytes(buffer.getvalue())  # a picture of the repository: replaced on purpose
    return out


if __name__ == "__main__":
    path = main()
    print(f"wrote {path} ({path.stat().st_size / 1024:.0f} kB)")
