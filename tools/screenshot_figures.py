"""Render every figure of orbitledger.figures once to PNG for the README and docs/figures.md.

    /work/venv/bin/python tools/screenshot_figures.py [--out docs/img] [--theme light]

Each figure is built from kernel results for the invented Kestrel-2 mission of the Fenwick
Orbital Lab, written as a standalone HTML page with BokehJS inlined (bokeh.embed.file_html,
INLINE) into a temporary folder, opened in headless Chromium through playwright and
screenshotted element-tight. Uses Debian's /usr/bin/chromium (or $CHROMIUM); the sandbox is
turned off only when running as root, as Chromium requires.
"""

from __future__ import annotations

import argparse
import math
import os
import sys
import tempfile
import warnings
from pathlib import Path

import erfa
import numpy as np
from bokeh.embed import file_html
from bokeh.resources import INLINE

from orbitledger import figures as F
from orbitledger.kernel import EARTH, BudgetItem, Elements, delta_v_budget, sun_position_gcrf_km
from orbitledger.kernel.eclipses import find_eclipses, shadow_state
from orbitledger.kernel.groundtrack import ground_track
from orbitledger.kernel.passes import Station, station_passes
from orbitledger.kernel.porkchop import planetary_porkchop
from orbitledger.kernel.propagation import trajectory

EPOCH = "2027-03-21T10:30:00Z"
DAY_S = 86_400.0
R = EARTH.radius_km
CANDIDATE_A = Elements(R + 540.0, 0.001, 97.5, 30.0, 90.0, 0.0)
CANDIDATE_B = Elements(R + 620.0, 0.02, 97.8, 30.0, 90.0, 120.0)
# An eccentric orbit where Kepler's second law is plain to see (illustrative).
ECCENTRIC = Elements(R + 6000.0, 0.45, 63.4, 30.0, 270.0, 60.0)
STATIONS = [
    Station("Harrow Fell", 60.2, -1.3, 0.08, 5.0),
    Station("Saltmarsh Point", 51.0, 1.9, 0.0, 10.0),
    Station("Kuru Ridge", -12.4, 178.6, 0.2, 5.0),
]


def build(theme: str) -> dict[str, object]:
    """Every figure, by file stem."""
    traj_a = trajectory("two-body", CANDIDATE_A, EPOCH, duration_s=DAY_S)
    traj_b = trajectory("two-body", CANDIDATE_B, EPOCH, duration_s=DAY_S)
    t = np.arange(0.0, DAY_S, 10.0)
    r_a, v_a = traj_a.gcrf(t)
    shadow = shadow_state(r_a, sun_position_gcrf_km(traj_a.times(t))) > 0
    track = ground_track(traj_a, t, in_eclipse=shadow)
    period = 2 * math.pi * math.sqrt(CANDIDATE_A.a_km**3 / EARTH.mu_km3_s2)
    one = np.linspace(0.0, period, 361)
    orbit_a = traj_a.gcrf(one)
    orbit_b = traj_b.gcrf(np.linspace(0.0, period * 1.02, 361))
    r_b, v_b = traj_b.gcrf(t)
    budget = delta_v_budget(
        [
            BudgetItem("launch dispersion correction", 0.015, False, "allowance"),
            BudgetItem("orbit raise 520 -> 540 km", 0.0111, True, "Hohmann"),
            BudgetItem("station keeping, 5 years", 0.0083, True, "drag make-up, moderate Sun"),
            BudgetItem("collision avoidance", 0.005, False, "1 m/s per year"),
            BudgetItem("disposal", 0.041, True, "perigee to 300 km"),
        ],
        isp_s=220.0,
        initial_mass_kg=48.0,
        margin_percent=10.0,
        propellant_available_kg=2.5,
    )
    d0 = sum(erfa.cal2jd(2026, 9, 1))
    grid = planetary_porkchop(
        "earth", "mars", d0 + np.arange(0.0, 150.0, 1.5), d0 + 150.0 + np.arange(0.0, 300.0, 3.0)
    )
    return {
        "orbit-plane": F.orbit_plane_figure(
            ECCENTRIC, labels=["eccentric orbit, e = 0.45"], theme=theme
        ),
        "orbit-plane-compare": F.orbit_plane_figure(
            [CANDIDATE_A, CANDIDATE_B], labels=["Kestrel-2 A", "Kestrel-2 B"], theme=theme
        ),
        "inertial": F.inertial_figure(
            [orbit_a, orbit_b], labels=["Kestrel-2 A", "Kestrel-2 B"], theme=theme
        ),
        "ground-track": F.ground_track_figure(
            track,
            STATIONS,
            labels=["Kestrel-2 A"],
            theme=theme,
            title="Ground track of Kestrel-2 A, one day from " + EPOCH,
        ),
        "height-speed": F.altitude_speed_figure(
            [
                {"times_utc": traj_a.times(t), "r_km": r_a, "v_km_s": v_a},
                {"times_utc": traj_b.times(t), "r_km": r_b, "v_km_s": v_b},
            ],
            labels=["Kestrel-2 A", "Kestrel-2 B"],
            theme=theme,
        ),
        "eclipses": F.eclipse_timeline_figure(
            [find_eclipses(traj_a, DAY_S), find_eclipses(traj_b, DAY_S)],
            traj_a.start,
            labels=["Kestrel-2 A", "Kestrel-2 B"],
            theme=theme,
        ),
        "contacts": F.contact_timeline_figure(
            station_passes(traj_a, STATIONS, DAY_S), traj_a.start, theme=theme
        ),
        "budget": F.budget_figure(budget, theme=theme, title="Delta-v budget of Kestrel-2 A"),
        "porkchop": F.transfer_figure(
            grid, quantity="c3", theme=theme, title="Earth to Mars, 2026 window: departure C3"
        ),
    }


def _chromium_args() -> list[str]:
    args = [
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
    ]
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        print("running as root: Chromium's sandbox is turned off (--no-sandbox)", file=sys.stderr)
        args.insert(0, "--no-sandbox")
    return args


def _shrink(png: Path, colours: int = 96) -> None:
    """Re-encode with an adaptive palette (Pillow, a developer-time tool here) so that each
    image stays well under 150 KB; flat plot colours survive the quantisation unchanged."""
    try:
        from PIL import Image
    except ImportError:  # keep the full-colour PNG
        return
    with Image.open(png) as image:
        small = image.convert("RGB").quantize(colors=colours, method=Image.Quantize.MEDIANCUT)
    small.save(png, optimize=True)


def screenshot(pages: dict[str, Path], out: Path) -> None:
    from playwright.sync_api import sync_playwright

    executable = os.environ.get("CHROMIUM", "/usr/bin/chromium")
    with tempfile.TemporaryDirectory(prefix="ol-chromium-") as profile, sync_playwright() as p:
        browser = p.chromium.launch_persistent_context(
            profile,
            executable_path=executable,
            args=_chromium_args(),
            headless=True,
            viewport={"width": 1100, "height": 900},
            device_scale_factor=1,
        )
        page = browser.new_page()
        for stem, html in pages.items():
            page.goto(html.as_uri())
            page.wait_for_selector("canvas", timeout=20_000)
            page.wait_for_timeout(600)  # let BokehJS finish its first paint
            target = page.locator("[data-root-id] > *").first  # the root is display: contents
            png = out / f"figure-{stem}.png"
            target.screenshot(path=str(png))
            _shrink(png)
            print(f"{png} ({png.stat().st_size / 1024:.0f} KiB)")
        browser.close()


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--out", type=Path, default=Path(__file__).resolve().parents[1] / "docs" / "img"
    )
    parser.add_argument("--theme", default="light", choices=["light", "dark"])
    parser.add_argument("--only", nargs="*", help="file stems to render (default: all)")
    args = parser.parse_args(argv)
    args.out.mkdir(parents=True, exist_ok=True)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # leap-second extrapolation notice for 2027
        figs = build(args.theme)
    suffix = "" if args.theme == "light" else "-dark"
    with tempfile.TemporaryDirectory(prefix="ol-figures-") as tmp:
        pages = {}
        for stem, fig in figs.items():
            if args.only and stem not in args.only:
                continue
            html = Path(tmp) / f"{stem}.html"
            html.write_text(file_html(fig, INLINE, title=stem), encoding="utf-8")
            pages[stem + suffix] = html
        screenshot(pages, args.out)
    return 0


if __name__ == "__main__":
    sys.exit(main())
