# SPDX-License-Identifier: MIT
"""Reads a PNG screenshot with the standard library only (zlib, struct; the
PNG format as its specification, RFC 2083, defines it: 8-bit RGB or RGBA,
filter types 0-4) and checks that the charts were drawn: enough distinct
colours, and enough pixels near the chart colours of the audit's scheme.

usage: pixels.py PNG   (exit 0 when the charts are there, 1 when not)
"""
import struct
import sys
import zlib


def read_png(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("not a PNG")
    pos, idat = 8, b""
    while pos < len(data):
        n = struct.unpack(">I", data[pos:pos + 4])[0]
        kind, body = data[pos + 4:pos + 8], data[pos + 8:pos + 8 + n]
        pos += 12 + n
        if kind == b"IHDR":
            width, height, depth, colour = struct.unpack(">IIBB", body[:10])
        elif kind == b"IDAT":
            idat += body
    if depth != 8 or colour not in (2, 6):
        raise ValueError("only 8-bit RGB or RGBA is read")
    bpp = 3 if colour == 2 else 4
    raw, stride = zlib.decompress(idat), width * bpp
    rows, prev, p = [], bytearray(stride), 0
    for _ in range(height):
        kind, line = raw[p], bytearray(raw[p + 1:p + 1 + stride])
        p += 1 + stride
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if kind == 1:
                line[i] = (line[i] + a) & 255
            elif kind == 2:
                line[i] = (line[i] + b) & 255
            elif kind == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif kind == 4:
                pa, pb, pc = abs(b - c), abs(a - c), abs(a + b - 2 * c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(bytes(line))
        prev = line
    return width, height, bpp, rows


def near(rgb, hexcolour, tolerance=40):
    want = [int(hexcolour[i:i + 2], 16) for i in (1, 3, 5)]
    return all(abs(x - y) <= tolerance for x, y in zip(rgb, want))


def main():
    width, height, bpp, rows = read_png(sys.argv[1])
    colours, slate, rust, ink = set(), 0, 0, 0
    for row in rows[::2]:
        for x in range(0, width * bpp, bpp * 2):
            rgb = tuple(row[x:x + 3])
            colours.add(rgb)
            if near(rgb, "#2c5a86"):
                slate += 1
            elif near(rgb, "#a33b20"):
                rust += 1
            elif near(rgb, "#1c2430"):
                ink += 1
    print("%dx%d, %d colours; chart pixels (a quarter sampled): slate %d, rust %d, ink %d"
          % (width, height, len(colours), slate, rust, ink))
    ok = len(colours) >= 64 and slate >= 500 and rust >= 100 and ink >= 500
    print("ok: the charts are drawn" if ok else "FAIL: the screenshot looks blank")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
