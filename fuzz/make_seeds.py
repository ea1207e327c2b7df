#!/usr/bin/env python3
"""Writes the starting inputs of the fuzz targets into fuzz/seeds/<target>/ (the committed starting seeds).

PNGs are encoded here by hand after the PNG specification (W3C PNG, second
edition: signature, IHDR/PLTE/tRNS/IDAT/IEND chunks with CRC-32, zlib
stream, filter type 0 per scanline), so no image library is needed; the
demo layers are decoded (8-bit RGB/RGBA, non-interlaced, the five filter
types) and scaled down by nearest sampling. Run from the repository root:

    python3 fuzz/make_seeds.py

Mesh seeds come from `underdraw cut` (see fuzz/README.md).
"""
import json, math, os, struct, zlib

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
CORPUS = os.path.join(ROOT, "fuzz", "seeds")


def chunk(kind, data):
    c = kind + data
    return struct.pack(">I", len(data)) + c + struct.pack(">I", zlib.crc32(c) & 0xFFFFFFFF)


def png(w, h, colour, depth, rows, plte=None, trns=None):
    """rows: list of bytes, one packed scanline each (without filter byte)."""
    ihdr = struct.pack(">IIBBBBB", w, h, depth, colour, 0, 0, 0)
    raw = b"".join(b"\0" + r for r in rows)
    out = b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr)
    if plte:
        out += chunk(b"PLTE", plte)
    if trns:
        out += chunk(b"tRNS", trns)
    return out + chunk(b"IDAT", zlib.compress(raw, 9)) + chunk(b"IEND", b"")


def rgba_png(w, h, alpha):
    rows = [bytes(v for x in range(w) for v in (200, 120, 40, alpha(x, y))) for y in range(h)]
    return png(w, h, 6, 8, rows)


def decode(path):
    """8-bit RGB/RGBA non-interlaced PNG → (w, h, alpha rows)."""
    data = open(path, "rb").read()
    pos, idat, w = 8, b"", None
    while pos < len(data):
        (n,) = struct.unpack(">I", data[pos:pos + 4])
        kind, body = data[pos + 4:pos + 8], data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, colour, _, _, inter = struct.unpack(">IIBBBBB", body)
            assert depth == 8 and colour in (2, 6) and inter == 0
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    bpp = 4 if colour == 6 else 3
    raw, stride = zlib.decompress(idat), w * bpp
    prev, rows = bytearray(stride), []
    for y in range(h):
        f, line = raw[y * (stride + 1)], bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b, c = prev[i], prev[i - bpp] if i >= bpp else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                pr = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[i] = (line[i] + pr) & 255
        rows.append([line[x * bpp + 3] if bpp == 4 else 255 for x in range(w)])
        prev = line
    return w, h, rows


def put(target, name, data):
    d = os.path.join(CORPUS, target)
    os.makedirs(d, exist_ok=True)
    with open(os.path.join(d, name), "wb") as f:
        f.write(data if isinstance(data, bytes) else data.encode())


def disc(w, h, soft=1.0):
    cx, cy, r = w / 2, h / 2, min(w, h) / 2 - 1
    def a(x, y):
        d = math.hypot(x + 0.5 - cx, y + 0.5 - cy)
        return round(max(0.0, min(1.0, (r - d) / soft + 0.5)) * 255)
    return a


def pngs():
    for name in sorted(os.listdir(os.path.join(ROOT, "demo-layers"))):
        if not name.endswith(".png"):
            continue
        w, h, rows = decode(os.path.join(ROOT, "demo-layers", name))
        k = max(1, math.ceil(max(w, h) / 64))
        sw, sh = max(1, w // k), max(1, h // k)
        put("cut_png", "demo-" + name, rgba_png(sw, sh, lambda x, y: rows[y * k][x * k]))
    put("cut_png", "disc16-rgba.png", rgba_png(16, 16, disc(16, 16)))
    put("cut_png", "hard-square.png", rgba_png(12, 12, lambda x, y: 255 if 2 <= x < 10 and 2 <= y < 10 else 0))
    put("cut_png", "ring24.png", rgba_png(24, 24, lambda x, y: 255 if 5 <= math.hypot(x - 11.5, y - 11.5) <= 10 else 0))
    put("cut_png", "checker8.png", rgba_png(8, 8, lambda x, y: 255 if (x + y) % 2 else 0))
    put("cut_png", "one-texel.png", rgba_png(1, 1, lambda x, y: 255))
    # grey + alpha, 8-bit
    a = disc(10, 10, 3.0)
    put("cut_png", "grey-alpha.png", png(10, 10, 4, 8, [bytes(v for x in range(10) for v in (90, a(x, y))) for y in range(10)]))
    # palette with tRNS: index 0 transparent, 1 half, 2 opaque
    idx = lambda x, y: 2 if 2 <= x < 6 and 2 <= y < 6 else (1 if 1 <= x < 7 and 1 <= y < 7 else 0)
    put("cut_png", "palette-trns.png", png(8, 8, 3, 8, [bytes(idx(x, y) for x in range(8)) for y in range(8)],
                                          plte=bytes([0, 0, 0, 128, 128, 128, 255, 255, 255]), trns=bytes([0, 128])))
    # 16-bit RGBA
    a = disc(8, 8)
    put("cut_png", "rgba16.png", png(8, 8, 6, 16, [b"".join(struct.pack(">HHHH", 1000, 2000, 3000, a(x, y) * 257) for x in range(8)) for y in range(8)]))
    # RGB without alpha (fully opaque), 1-bit grey (no alpha)
    put("cut_png", "rgb-opaque.png", png(4, 4, 2, 8, [bytes(30 for _ in range(12)) for _ in range(4)]))
    put("cut_png", "grey-1bit.png", png(8, 2, 0, 1, [b"\xaa", b"\x55"]))


def scenes():
    text = open(os.path.join(ROOT, "demo-layers", "harbour.scene.json")).read()
    put("scene_json", "harbour-as-is.json", text)
    put("scene_json", "harbour-from-root.json", text.replace('"image": "', '"image": "demo-layers/'))
    one = {"viewport": [320, 200], "camera": {"travel": 640, "samples": 4},
           "layers": [{"name": "b", "image": "demo-layers/ui-button.png",
                       "cut": {"budget": 12, "filter": "nearest", "mip_levels": 2, "wrap": "xy",
                               "opaque_min": 200, "visible_min": 10},
                       "position": [1.5, -2], "scale": 0.5, "parallax": 0.25, "fill_width": True}]}
    put("scene_json", "one-layer-all-keys.json", json.dumps(one))
    one["layers"][0]["cut"] = {"visible_min": 250, "opaque_min": 100}
    put("scene_json", "bad-thresholds.json", json.dumps(one))
    one["layers"][0].pop("cut")
    one["layers"][0]["mesh"] = "demo-layers/ui-button.png"
    put("scene_json", "mesh-file.json", json.dumps(one))


def fit_inputs():
    # w-1, h-1, quantize, bilinear, mip, wrap, thresholds(flag[,a,b]), budget(u16), alpha...
    def head(w, h, q, bil, mip, wrap, thr, budget):
        t = bytes([0]) if thr is None else bytes([1, thr[0], thr[1]])
        return bytes([w - 1, h - 1, q, bil, mip, wrap]) + t + struct.pack("<H", budget - 4)
    d = disc(16, 16, 2.0)
    put("fit_mask", "disc16-bilinear", head(16, 16, 0, 1, 0, 0, None, 16) + bytes(d(x, y) for y in range(16) for x in range(16)))
    put("fit_mask", "disc16-nearest-mip2", head(16, 16, 0, 0, 2, 0, None, 8) + bytes(d(x, y) for y in range(16) for x in range(16)))
    put("fit_mask", "stripes-wrap-x", head(20, 9, 1, 1, 1, 1, None, 32) + bytes([255, 255, 255, 100, 0, 0, 0]))
    put("fit_mask", "noise-quant-xy", head(33, 17, 1, 1, 3, 3, (200, 20), 64) + bytes((i * 97 + 13) % 256 for i in range(200)))
    put("fit_mask", "holes-48", head(48, 48, 0, 1, 0, 2, None, 256) +
        bytes(0 if math.hypot(x % 12 - 6, y % 12 - 6) < 3 else 255 for y in range(48) for x in range(48)))


if __name__ == "__main__":
    pngs()
    scenes()
    fit_inputs()
