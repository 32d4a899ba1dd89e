"""Checks a browser screenshot of a client report, with Python's standard library alone.

    png_pages.py SHOT.png WIDTH HEIGHT [PAGE_HEIGHT]

Reads the PNG (8-bit RGB or RGBA, not interlaced, as Chromium writes it), checks that it has
the size asked for and is not blank: at least 5 % of its pixels differ from the most common
colour (the page's ground), and some are strongly coloured (the maps), not only grey text.
With PAGE_HEIGHT it also cuts the shot into pieces SHOT-1.png, SHOT-2.png, ... of that height,
small enough to look at one by one. Prints what it found; exits 1 when a check fails.
"""
import struct
import sys
import zlib
from collections import Counter


def read_png(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        sys.exit(f"{path}: not a PNG file")
    pos, idat, head = 8, [], None
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            head = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat.append(body)
        pos += 12 + length
    width, height, depth, colour, _, _, interlace = head
    if depth != 8 or colour not in (2, 6) or interlace:
        sys.exit(f"{path}: expected 8-bit RGB or RGBA, not interlaced (got depth {depth}, "
                 f"colour type {colour}, interlace {interlace})")
    channels = 3 if colour == 2 else 4
    raw = zlib.decompress(b"".join(idat))
    stride = width * channels
    rows, previous = [], bytearray(stride)
    for y in range(height):
        kind = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for x in range(stride):
            a = line[x - channels] if x >= channels else 0
            b = previous[x]
            c = previous[x - channels] if x >= channels else 0
            if kind == 1:
                line[x] = (line[x] + a) & 255
            elif kind == 2:
                line[x] = (line[x] + b) & 255
            elif kind == 3:
                line[x] = (line[x] + (a + b) // 2) & 255
            elif kind == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[x] = (line[x] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(bytes(line[i:i + 3]) for i in range(0, stride, channels))
        rows[-1] = b"".join(rows[-1])
        previous = line
    return width, height, rows


def write_png(path, width, rows):
    def chunk(kind, body):
        return (struct.pack(">I", len(body)) + kind + body +
                struct.pack(">I", zlib.crc32(kind + body) & 0xFFFFFFFF))
    raw = b"".join(b"\x00" + row for row in rows)
    with open(path, "wb") as f:
        f.write(b"\x89PNG\r\n\x1a\n")
        f.write(chunk(b"IHDR", struct.pack(">IIBBBBB", width, len(rows), 8, 2, 0, 0, 0)))
        f.write(chunk(b"IDAT", zlib.compress(raw, 6)))
        f.write(chunk(b"IEND", b""))


def main():
    if len(sys.argv) not in (4, 5):
        sys.exit(__doc__)
    path, want_w, want_h = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    width, height, rows = read_png(path)
    failures = []
    if (width, height) != (want_w, want_h):
        failures.append(f"size {width}x{height}, asked for {want_w}x{want_h}")
    pixels = Counter()
    for row in rows[::4]:  # every fourth row and column is plenty for these counts
        for i in range(0, len(row), 12):
            pixels[row[i:i + 3]] += 1
    total = sum(pixels.values())
    ground, ground_count = pixels.most_common(1)[0]
    inked = 1 - ground_count / total
    coloured = sum(n for p, n in pixels.items() if max(p) - min(p) > 60) / total
    print(f"{path}: {width}x{height}, ground rgb{tuple(ground)}, {inked:.1%} of pixels differ "
          f"from it, {coloured:.2%} strongly coloured, {len(pixels)} colours")
    if inked < 0.05:
        failures.append(f"blank: only {inked:.1%} of pixels differ from the ground")
    if coloured < 0.002:
        failures.append("no strongly coloured pixels: the maps are missing")
    if len(sys.argv) == 5:
        page = int(sys.argv[4])
        stem = path[:-4] if path.endswith(".png") else path
        for k, top in enumerate(range(0, height, page)):
            write_png(f"{stem}-{k + 1}.png", width, rows[top:top + page])
        print(f"cut into {(height + page - 1) // page} pieces {stem}-N.png of {page} rows")
    for f in failures:
        print("FAILED:", f)
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
