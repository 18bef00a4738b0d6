"""Fails unless a PNG screenshot is not blank: decodes it with the standard library only
(zlib, PNG filters of the PNG specification, section 9) and requires many distinct colours
and a good share of pixels that differ from the most common (background) colour."""
import struct
import sys
import zlib


def decode(path):
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", "not a PNG"
    pos, idat, w, h, ctype = 8, b"", 0, 0, 0
    while pos < len(data):
        n, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, ctype = struct.unpack(">IIBB", body[:10])
            assert depth == 8, "only 8-bit PNGs"
        elif kind == b"IDAT":
            idat += body
        pos += 12 + n
    bpp = {2: 3, 6: 4, 0: 1, 4: 2}[ctype]
    raw = zlib.decompress(idat)
    stride = w * bpp
    rows, prev = [], bytearray(stride)
    for y in range(h):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
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
        rows.append(bytes(line))
        prev = line
    return w, h, bpp, rows


def main():
    w, h, bpp, rows = decode(sys.argv[1])
    counts = {}
    for r in rows[::4]:
        for x in range(0, w * bpp, bpp * 4):
            px = r[x:x + 3]
            counts[px] = counts.get(px, 0) + 1
    total = sum(counts.values())
    background = max(counts.values())
    colours = len(counts)
    inked = 1 - background / total
    print(f"png_stats: {w}x{h}, {colours} colours, {inked:.1%} non-background")
    if colours < 20 or inked < 0.03:
        print("png_stats: the screenshot looks blank", file=sys.stderr)
        sys.exit(1)


main()
