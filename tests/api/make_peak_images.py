"""Writes the images `tests/api/peak_memory.sh` registers, into the directory given (not committed: 4096x4096
is large). Written by Pillow and numpy, the general-purpose libraries, not by our encoder:
    python3 tests/api/make_peak_images.py OUT_DIR

- scene_640x480.png: a room-sized scene (640x480, 8-bit RGB) for comparison;
- scene_4096x4096.png: 4096x4096 8-bit RGB, exactly the default pixel limit (16,777,216 pixels);
- over_4097x4096.png: one column more than the limit allows, to be refused from its header.
The pictures are blocks of flat colour with a fine texture, so the PNG is neither trivially small nor noise.
With a count N after the directory, also large_1.png .. large_N.png: 4096x4096 pictures whose blocks are
shifted by the index, so each is a different scene (`tests/api/cache_memory.sh` registers them in a row):
    python3 tests/api/make_peak_images.py OUT_DIR N
"""
import os
import sys

import numpy as np
from PIL import Image


def picture(width, height, shift=0):
    x = np.arange(width, dtype=np.uint32)[None, :] + shift
    y = np.arange(height, dtype=np.uint32)[:, None]
    block = ((x // 64) * 37 + (y // 48) * 101 + shift) % 251
    red = np.broadcast_to(block, (height, width))
    green = ((x % 7) * 9) ^ block
    blue = np.broadcast_to((y % 5) * 11, (height, width))
    return np.stack([red, green, blue], axis=-1).astype(np.uint8)


def main():
    if len(sys.argv) not in (2, 3):
        sys.exit("usage: make_peak_images.py OUT_DIR [N]")
    out = sys.argv[1]
    variants = int(sys.argv[2]) if len(sys.argv) == 3 else 0
    os.makedirs(out, exist_ok=True)
    for name, width, height in [
        ("scene_640x480.png", 640, 480),
        ("scene_4096x4096.png", 4096, 4096),
        ("over_4097x4096.png", 4097, 4096),
    ]:
        path = os.path.join(out, name)
        Image.fromarray(picture(width, height), "RGB").save(path, "PNG")
        print(f"{path}: {width}x{height}, {os.path.getsize(path)} bytes")
    for index in range(1, variants + 1):
        path = os.path.join(out, f"large_{index}.png")
        Image.fromarray(picture(4096, 4096, shift=index * 29), "RGB").save(path, "PNG")
        print(f"{path}: 4096x4096, {os.path.getsize(path)} bytes")


if __name__ == "__main__":
    main()
