"""Photos made small enough for a report: upright by their EXIF orientation, re-encoded as JPEG.

A phone photo is 3–5 MB; forty of them would make a report nobody can e-mail.
At 1000 px on the long side a photo still prints sharp at 8 cm wide
(about 300 dpi), and is kept under 200 kB (our default).
"""

from __future__ import annotations

from dataclasses import dataclass
from io import BytesIO
from pathlib import Path

from PIL import Image, ImageOps

#: Longest side of a photo in a report, in pixels (our default).
MAX_PIXELS = 1000
#: JPEG qualities tried in turn until a photo fits its budget (our default;
#: 70–80 is common practice for the web, and 40 still reads for site photos).
QUALITIES = (72, 60, 50, 40)
#: Most bytes one photo may take: forty of them plus the rest of a report stay
#: under 10 MB (our default).
PHOTO_BUDGET = 200_000


@dataclass(frozen=True)
class SmallPhoto:
    """A photo re-encoded for a report."""

    data: bytes
    width: int
    height: int

    @property
    def aspect(self) -> float:
        """Height over width."""
        return self.height / self.width


def downscale(
    path: Path, *, max_pixels: int = MAX_PIXELS, budget: int = PHOTO_BUDGET
) -> SmallPhoto:
    """Read a photo, turn it upright, shrink it to `max_pixels` on the long side, encode as JPEG.

    JPEG files are decoded at a reduced scale straight away (Pillow's draft mode),
    so a 12-megapixel photo never sits in memory at full size. A photo whose
    JPEG is over `budget` bytes is encoded again at lower qualities, then smaller,
    until it fits: grainy low-light shots compress badly.

    Raises:
        OSError: the file is missing or not an image Pillow can read.
    """
    with Image.open(path) as image:
        width, height = image.size
        scale = max_pixels / max(width, height)
        image.draft("RGB", (max(1, int(width * scale)), max(1, int(height * scale))))
        upright = ImageOps.exif_transpose(image).convert("RGB")
    upright.thumbnail((max_pixels, max_pixels), Image.Resampling.LANCZOS)
    while True:
        for quality in QUALITIES:
            out = BytesIO()
            upright.save(out, "JPEG", quality=quality, optimize=True)
            if out.tell() <= budget:
                return SmallPhoto(out.getvalue(), upright.width, upright.height)
        if max(upright.size) <= 200:
            return SmallPhoto(out.getvalue(), upright.width, upright.height)
        upright = upright.resize(
            (upright.width * 4 // 5, upright.height * 4 // 5), Image.Resampling.LANCZOS
        )
