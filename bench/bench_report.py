"""How long a 40-photo report takes from full-size photos, against bare reportlab drawing them.

Makes 40 full-size (4000 × 3000) noisy JPEGs in a temporary folder and a site
whose latest inspection carries them (photos attached through the store as the
TUI does), then in one process times

- the floor: each photo downscaled exactly as the report does it and drawn with a
  bare reportlab canvas, two to a page, nothing else; and
- the report: building the report's content from the store and the engine, and
  rendering it (cover, summary, tables, trend charts, the same 40 photos),

best of `--repeat` runs each, and prints their ratio (target ≤ 1.5), the PDF's
size (target ≤ 10 MB) and peak memory (the process's maximum resident size, and
Python's own allocations in one traced report run).

    python bench/bench_report.py [--photos N] [--repeat N] [--keep DIR]
"""

from __future__ import annotations

import argparse
import resource
import sys
import tempfile
import time
import tracemalloc
from collections.abc import Callable
from io import BytesIO
from pathlib import Path

from PIL import Image, ImageDraw
from reportlab import rl_config
from reportlab.lib.pagesizes import A4
from reportlab.lib.units import mm
from reportlab.lib.utils import ImageReader
from reportlab.pdfgen import canvas

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from test_report_factory import build_site  # noqa: E402

from inspectkit.report.branding import load_branding  # noqa: E402
from inspectkit.report.gather import build_report  # noqa: E402
from inspectkit.report.photos import downscale  # noqa: E402
from inspectkit.report.render import render_report  # noqa: E402
from inspectkit.store import Store  # noqa: E402
from inspectkit.store.photos import attach_photo, photo_path  # noqa: E402

SIZE = (4000, 3000)


def make_photos(folder: Path, count: int) -> list[Path]:
    """Distinct full-size JPEGs: coarse noise blown up, a gradient and a numbered mark."""
    paths = []
    for n in range(count):
        noise = Image.effect_noise((SIZE[0] // 4, SIZE[1] // 4), 60 + n).convert("RGB")
        image = noise.resize(SIZE, Image.Resampling.BICUBIC)
        draw = ImageDraw.Draw(image)
        draw.rectangle((200 + 40 * n, 300, 1400 + 40 * n, 2200), outline=(200, 80, 20), width=25)
        draw.text((300, 400), f"photo {n}", fill=(255, 255, 0))
        path = folder / f"IMG_{n:04d}.jpg"
        image.save(path, "JPEG", quality=88)
        paths.append(path)
    return paths


def floor(paths: list[Path]) -> bytes:
    """Bare reportlab: the same downscaled photos, two to a page, at the report's size.

    Photos go in as binary streams, as the report writes them, so the sizes compare.
    """
    rl_config.useA85 = 0
    out = BytesIO()
    page = canvas.Canvas(out, pagesize=A4)
    for n, path in enumerate(paths):
        small = downscale(path)
        height = 80 * mm * small.aspect
        page.drawImage(
            ImageReader(BytesIO(small.data)),
            20 * mm,
            150 * mm if n % 2 == 0 else 40 * mm,
            80 * mm,
            min(height, 100 * mm),
        )
        if n % 2 == 1:
            page.showPage()
    page.save()
    return out.getvalue()


def best(run: Callable[[], bytes], repeat: int) -> tuple[float, bytes]:
    times, data = [], b""
    for _ in range(repeat):
        start = time.perf_counter()
        data = run()
        times.append(time.perf_counter() - start)
    return min(times), data


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--photos", type=int, default=40)
    parser.add_argument("--repeat", type=int, default=2)
    parser.add_argument("--keep", type=Path, help="keep the data and the PDF in this folder")
    args = parser.parse_args()

    with tempfile.TemporaryDirectory() as temp:
        folder = args.keep or Path(temp)
        folder.mkdir(parents=True, exist_ok=True)
        start = time.perf_counter()
        paths = make_photos(folder, args.photos)
        store = Store.open(folder / "bench.sqlite")
        made = build_site(store, folder, photos=0)
        photos = [
            attach_photo(
                store,
                p,
                inspection_id=made.current.id,
                caption=f"{p.name}: north façade, detail {n}",
            )
            for n, p in enumerate(paths)
        ]
        stored = [photo_path(store, p.sha256) for p in photos]
        megabytes = sum(p.stat().st_size for p in stored) / 1e6
        print(
            f"made {len(paths)} photos of {SIZE[0]}×{SIZE[1]} ({megabytes:.0f} MB) "
            f"in {time.perf_counter() - start:.1f} s"
        )
        branding = load_branding()

        def report() -> bytes:
            content = build_report(store, made.current.id)
            return render_report(content, branding).data

        floor_s, floor_pdf = best(lambda: floor(stored), args.repeat)
        report_s, report_pdf = best(report, args.repeat)
        tracemalloc.start()
        report()
        _, traced = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        if args.keep:
            (folder / "report.pdf").write_bytes(report_pdf)
        store.close()

    rss_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(
        f"floor  (bare reportlab, same downscaled photos): {floor_s:.2f} s, "
        f"{len(floor_pdf) / 1e6:.2f} MB"
    )
    print(
        f"report (store + engine + full layout):           {report_s:.2f} s, "
        f"{len(report_pdf) / 1e6:.2f} MB"
    )
    ratio = report_s / floor_s
    print(
        f"ratio report/floor: {ratio:.2f} (target ≤ 1.5)   "
        f"size: {len(report_pdf) / 1e6:.2f} MB (target ≤ 10 MB)"
    )
    print(
        f"peak memory: {rss_mb:.0f} MB resident (whole process), "
        f"{traced / 1e6:.1f} MB Python allocations in one report run"
    )


if __name__ == "__main__":
    main()
