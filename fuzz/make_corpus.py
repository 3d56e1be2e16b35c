"""Writes the seed corpus of every fuzz target under fuzz/corpus/<target>/ (small files, committed).

Images come from Pillow and NPY arrays from numpy (the general-purpose libraries the decoders are checked
against elsewhere); the text seeds are ours, set in the Juniper Lane flat. Run from the repository root:
    pip install numpy pillow && python3 fuzz/make_corpus.py
"""
import io
import json
import os

import numpy as np
from PIL import Image

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "corpus")


def put(target, name, data):
    folder = os.path.join(ROOT, target)
    os.makedirs(folder, exist_ok=True)
    if isinstance(data, str):
        data = data.encode("utf-8")
    with open(os.path.join(folder, name), "wb") as handle:
        handle.write(data)


def png(array, mode=None, **options):
    out = io.BytesIO()
    Image.fromarray(array, mode).save(out, "PNG", **options)
    return out.getvalue()


rng = np.random.default_rng(24)
rgb = rng.integers(0, 256, (6, 8, 3), dtype=np.uint8)
put("image", "rgb8.png", png(rgb))
put("image", "rgba8.png", png(np.dstack([rgb, np.full((6, 8), 200, np.uint8)])))
put("image", "grey16.png", png(rng.integers(0, 65535, (6, 8)).astype(np.uint16)))
palette = io.BytesIO()
Image.fromarray(rgb).convert("P").save(palette, "PNG")
put("image", "palette.png", palette.getvalue())
jpeg = io.BytesIO()
Image.fromarray(rgb).save(jpeg, "JPEG", quality=80)
put("image", "small.jpg", jpeg.getvalue())

for name, array in [
    ("hwc_f32.npy", rng.random((6, 8, 4), dtype=np.float32)),
    ("chw_f64.npy", rng.random((3, 6, 8))),
    ("big_endian.npy", rng.random((2, 3, 4)).astype(">f8")),
    ("fortran.npy", np.asfortranarray(rng.random((4, 5, 2), dtype=np.float32))),
]:
    out = io.BytesIO()
    np.save(out, array)
    put("npy", name, out.getvalue())

labels = rng.integers(0, 5, (6, 8), dtype=np.uint8)
put("label_map", "labels8.png", png(labels))
put("label_map", "labels16.png", png(labels.astype(np.uint16) * 7))
put("label_map", "classes.txt", "floor\nwall\nsofa\nmug\nbath towel\n")

put("detections", "boxes.jsonl", "\n".join(json.dumps(d) for d in [
    {"class": "mug", "box": [3, 4, 20, 18], "score": 0.9},
    {"class": "sofa", "box": {"x0": 0, "y0": 10, "x1": 40, "y1": 47}, "score": 0.7},
    {"class": "cat", "box": [30, 5, 60, 40], "score": 0.55, "mask_runs": [[5, 30, 10]]},
]) + "\n")

put("scene_loader", "name_only", json.dumps({"name": "juniper-lane-study", "width": 8, "height": 6}))
put("scene_loader", "with_camera", json.dumps({"name": "hall", "room": "hallway"}).encode() + b"\0"
    + json.dumps({"fx": 6.0, "fy": 6.0, "cx": 4.0, "cy": 3.0, "depth_unit": "millimetres"}).encode())

b64 = __import__("base64").b64encode
put("wire_json", "register_demo", json.dumps({"demo": "living_room_evening"}))
put("wire_json", "register_image", json.dumps({
    "name": "juniper-lane-hall", "image_base64": b64(png(rgb)).decode(),
    "detections": [{"class": "mug", "box": {"x0": 1, "y0": 1, "x1": 4, "y1": 4}, "score": 0.8}],
    "scores_classes": ["floor", "wall"], "room": "hallway"}))
put("wire_json", "utterance", json.dumps({"text": "that's a towel, not a cat", "focus": {"type": "pixel", "x": 3, "y": 2}}))
put("wire_json", "open", json.dumps({"scene_id": 4.0}))
put("wire_json", "page", json.dumps({"after": 10, "limit": 50}))
put("wire_json", "notes", '{"scene_id": 1, "text": "four books on the shelf"}\n2\tthere is no cat\n')

for index, text in enumerate([
    "that's a towel, not a cat",
    "there are four books on the shelf",
    "the mug that's on the cabinet, it's a vase",
    "you missed a mug, it's on the desk",
    "undo",
    "no, the other one",
    "I see neither a lamp nor a plant on the left of the uh sofa",
    "why is there a mug? there isn't one",
]):
    put("parser", f"utterance_{index}.txt", text)
