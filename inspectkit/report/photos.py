"""Photos made small enough for a report: upright by their EXIF orientation, re-encoded as JPEG.

A phone photo is 3–5 MB; forty of them would make a report nobody can e-mail.
At 1000 px on the long side a photo still prints sharp at 8 cm wide
(about 300 dpi), and weighs some 100–250 kB (our default).
"""

from __future__ import annotations

from dataclasses import dataclass
from io import BytesIO
from pathlib import Path

from PIL import Image, ImageOps

#: Longest side of a photo in a report, in pixels (our default).
MAX_PIXELS = 1000
#: JPEG quality of report photos (our default; 70–80 is common practice for the web).
JPEG_QUALITY = 72


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


def downscale(path: Path, *, max_pixels: int = MAX_PIXELS, quality: int = JPEG_QUALITY) -> SmallPhoto:
    """Read a photo, turn it upright, shrink it to `max_pixels` on the long side, encode as JPEG.

    JPEG files are decoded at a reduced scale straight away (Pillow's draft mode),
    so a 12-megapixel photo never sits in memory at full size.

    Raises:
        OSError: the file is missing or not an image Pillow can read.
    """
    with Image.open(path) as image:
        image.draft("RGB", (max_pixels, max_pixels))
        upright = ImageOps.exif_transpose(image)
        upright = upright.convert("RGB")
        upright.thumbnail((max_pixels, max_pixels), Image.Resampling.LANCZOS)
        out = BytesIO()
        upright.save(out, "JPEG", quality=quality, optimize=True)
        return SmallPhoto(out.getvalue(), upright.width, upright.height)
