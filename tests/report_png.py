#!/usr/bin/env python3
"""PNG helper for the report's browser test, standard library only (zlib, struct).

    report_png.py ink FILE.png            prints "WIDTH HEIGHT INK COLOURS": INK is the number
                                          of pixels that are not near-white (any channel
                                          below 235), COLOURS the number of distinct
                                          colours among them, quantised to 4 bits a channel
    report_png.py crop FILE.png X Y W H OUT.png
                                          writes the rectangle as a new PNG (for looking at
                                          one part of a tall screenshot)

Decodes 8-bit greyscale, RGB, grey+alpha and RGBA images, non-interlaced, with the five
filter types of the PNG specification (W3C PNG, 2nd edition, section 9).
"""
import struct
import sys
import zlib

CHANNELS = {0: 1, 2: 3, 4: 2, 6: 4}


def read_png(path):
    with open(path, "rb") as f:
        data = f.read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError(f"{path}: not a PNG file")
    pos, idat, header = 8, [], None
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        pos += 12 + length
        if kind == b"IHDR":
            header = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            idat.append(body)
        elif kind == b"IEND":
            break
    width, height, depth, colour, _, _, interlace = header
    if depth != 8 or colour not in CHANNELS or interlace != 0:
        raise ValueError(f"{path}: unsupported PNG (depth {depth}, colour type {colour}, interlace {interlace})")
    bpp = CHANNELS[colour]
    raw = zlib.decompress(b"".join(idat))
    stride = width * bpp
    rows, prev, p = [], bytearray(stride), 0
    for _ in range(height):
        ftype = raw[p]
        line = bytearray(raw[p + 1:p + 1 + stride])
        p += 1 + stride
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if ftype == 1:
                line[i] = (line[i] + a) & 255
            elif ftype == 2:
                line[i] = (line[i] + b) & 255
            elif ftype == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif ftype == 4:
                pa, pb, pc = abs(b - c), abs(a - c), abs(a + b - 2 * c)
                pred = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[i] = (line[i] + pred) & 255
        rows.append(bytes(line))
        prev = line
    return width, height, bpp, rows


def rgb(px, bpp):
    if bpp in (1, 2):
        return (px[0], px[0], px[0])
    return (px[0], px[1], px[2])


def ink(path):
    width, height, bpp, rows = read_png(path)
    count, colours = 0, set()
    for row in rows:
        for x in range(0, width * bpp, bpp):
            r, g, b = rgb(row[x:x + bpp], bpp)
            if min(r, g, b) < 235:
                count += 1
                colours.add((r >> 4, g >> 4, b >> 4))
    print(width, height, count, len(colours))


def crop(path, x0, y0, w, h, out):
    width, height, bpp, rows = read_png(path)
    w, h = min(w, width - x0), min(h, height - y0)
    body = b"".join(b"\x00" + rows[y][x0 * bpp:(x0 + w) * bpp] for y in range(y0, y0 + h))
    colour = {1: 0, 3: 2, 2: 4, 4: 6}[bpp]

    def chunk(kind, payload):
        return struct.pack(">I", len(payload)) + kind + payload + struct.pack(">I", zlib.crc32(kind + payload))

    png = b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, colour, 0, 0, 0))
    png += chunk(b"IDAT", zlib.compress(body, 6)) + chunk(b"IEND", b"")
    with open(out, "wb") as f:
        f.write(png)


if __name__ == "__main__":
    if len(sys.argv) == 3 and sys.argv[1] == "ink":
        ink(sys.argv[2])
    elif len(sys.argv) == 8 and sys.argv[1] == "crop":
        crop(sys.argv[2], *map(int, sys.argv[3:7]), sys.argv[7])
    else:
        sys.exit(__doc__)
