"""Drawn stand-ins for site photos: small JPEGs with a caption and real EXIF tags.

The demo needs photos that exercise what real ones bring (a taken-at time, an
orientation other than upright) without shipping anyone's pictures.
"""

from __future__ import annotations

import random
from datetime import datetime
from pathlib import Path

from PIL import Image, ImageDraw, ImageFont

WIDTH, HEIGHT = 640, 480
_EXIF_ORIENTATION = 0x0112
_EXIF_IFD = 0x8769
_EXIF_DATETIME_ORIGINAL = 0x9003
_EXIF_DATETIME = 0x0132


def draw_photo(
    target: Path, caption: str, taken_at: datetime, rng: random.Random, *, orientation: int = 1
) -> Path:
    """Write a JPEG of a wall, a conductor and a clamp, captioned, with EXIF time and orientation.

    The drawing depends only on `rng`, so the same seed gives the same bytes.
    """
    sky = (rng.randrange(150, 200), rng.randrange(170, 210), rng.randrange(200, 235))
    image = Image.new("RGB", (WIDTH, HEIGHT), sky)
    draw = ImageDraw.Draw(image)
    ground = rng.randrange(300, 360)
    draw.rectangle((0, ground, WIDTH, HEIGHT), fill=(96, 84, 62))
    wall_left = rng.randrange(60, 200)
    draw.rectangle((wall_left, 40, wall_left + 300, ground), fill=(168, 92, 70))
    for row in range(40, ground, 24):
        draw.line((wall_left, row, wall_left + 300, row), fill=(140, 128, 118), width=2)
    conductor_x = wall_left + rng.randrange(80, 220)
    draw.line((conductor_x, 40, conductor_x, HEIGHT), fill=(184, 115, 51), width=8)
    clamp_y = ground - rng.randrange(20, 80)
    draw.rectangle(
        (conductor_x - 18, clamp_y - 14, conductor_x + 18, clamp_y + 14),
        fill=(110, 110, 104),
        outline=(40, 40, 40),
        width=2,
    )
    for _ in range(rng.randrange(6, 14)):
        x = conductor_x + rng.randrange(-24, 24)
        y = clamp_y + rng.randrange(-20, 20)
        r = rng.randrange(3, 8)
        draw.ellipse((x - r, y - r, x + r, y + r), fill=(62, 140, 110))
    draw.rectangle((0, HEIGHT - 56, WIDTH, HEIGHT), fill=(20, 20, 20))
    draw.text((16, HEIGHT - 46), caption, fill=(255, 255, 255), font=ImageFont.load_default(24))
    exif = Image.Exif()
    stamp = taken_at.strftime("%Y:%m:%d %H:%M:%S")
    exif[_EXIF_ORIENTATION] = orientation
    exif[_EXIF_DATETIME] = stamp
    exif.get_ifd(_EXIF_IFD)[_EXIF_DATETIME_ORIGINAL] = stamp
    image.save(target, "JPEG", quality=70, exif=exif)
    return target
