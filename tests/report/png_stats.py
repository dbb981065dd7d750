"""Reads an 8-bit PNG with the standard library (zlib) and prints pixel statistics as JSON.

Usage: png_stats.py FILE.png   ->  {"width":..,"height":..,"non_white":..,"dark":..,"colours":..}
non_white: pixels with any channel below 245 after compositing on white; dark: luminance < 100;
colours: distinct RGB values (capped at 4096). PNG layout and filters: PNG specification
(ISO/IEC 15948:2003, W3C Recommendation), sections 5, 9 and 11.
"""
import json
import struct
import sys
import zlib


def decode(path):
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("not a PNG signature")
    pos, idat, ihdr, plte = 8, b"", None, None
    while pos < len(data):
        (length,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        pos += 12 + length
        if kind == b"IHDR":
            ihdr = struct.unpack(">IIBBBBB", body)
        elif kind == b"PLTE":
            plte = body
        elif kind == b"IDAT":
            idat += body
        elif kind == b"IEND":
            break
    width, height, depth, ctype, _, _, interlace = ihdr
    if depth != 8 or interlace != 0:
        raise ValueError("only 8-bit, non-interlaced PNGs are handled")
    channels = {0: 1, 2: 3, 3: 1, 4: 2, 6: 4}[ctype]
    raw = zlib.decompress(idat)
    stride = width * channels
    rows, prev = [], bytearray(stride)
    for y in range(height):
        f = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - channels] if i >= channels else 0
            b = prev[i]
            c = prev[i - channels] if i >= channels else 0
            if f == 1:
                line[i] = (line[i] + a) & 255
            elif f == 2:
                line[i] = (line[i] + b) & 255
            elif f == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif f == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                pred = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[i] = (line[i] + pred) & 255
        rows.append(line)
        prev = line
    return width, height, ctype, channels, plte, rows


def stats(path):
    width, height, ctype, channels, plte, rows = decode(path)
    non_white = dark = 0
    colours = set()
    for line in rows:
        for x in range(width):
            px = line[x * channels:(x + 1) * channels]
            if ctype == 3:
                r, g, b = plte[3 * px[0]:3 * px[0] + 3]
                alpha = 255
            elif ctype in (0, 4):
                r = g = b = px[0]
                alpha = px[1] if ctype == 4 else 255
            else:
                r, g, b = px[0], px[1], px[2]
                alpha = px[3] if ctype == 6 else 255
            # Composite on white.
            r = (r * alpha + 255 * (255 - alpha)) // 255
            g = (g * alpha + 255 * (255 - alpha)) // 255
            b = (b * alpha + 255 * (255 - alpha)) // 255
            if min(r, g, b) < 245:
                non_white += 1
            if 0.2126 * r + 0.7152 * g + 0.0722 * b < 100:
                dark += 1
            if len(colours) < 4096:
                colours.add((r, g, b))
    return {"width": width, "height": height, "non_white": non_white, "dark": dark,
            "colours": len(colours)}


if __name__ == "__main__":
    print(json.dumps(stats(sys.argv[1])))
