#!/usr/bin/env python3
"""Convert an X window dump (xwd -root, TrueColor, 24 or 32 bits a pixel) to PNG, standard library
only. usage: xwd_to_png.py IN.xwd OUT.png. Used by gui_smoke.sh; the XWD layout is X11's XWDFile.h
(a header of 25 big-endian CARD32 fields, the window name, the colormap, then the pixels)."""
import struct
import sys
import zlib


def main(src, dst):
    data = open(src, "rb").read()
    h = struct.unpack(">25I", data[:100])
    header_size, version, _fmt, _depth, width, height = h[0], h[1], h[2], h[3], h[4], h[5]
    byte_order, bits_per_pixel, bytes_per_line = h[7], h[11], h[12]
    ncolors = h[19]
    red_mask, green_mask, blue_mask = h[14], h[15], h[16]
    if version != 7 or bits_per_pixel not in (24, 32):
        sys.exit("unsupported XWD: version %d, %d bits a pixel" % (version, bits_per_pixel))
    offset = header_size + 12 * ncolors
    step = bits_per_pixel // 8
    order = "<" if byte_order == 0 else ">"

    def shift(mask):
        s = 0
        while mask and not mask & 1:
            mask >>= 1
            s += 1
        return s

    rs, gs, bs = shift(red_mask), shift(green_mask), shift(blue_mask)
    rows = []
    for y in range(height):
        line = data[offset + y * bytes_per_line: offset + y * bytes_per_line + width * step]
        out = bytearray(b"\x00")  # filter type 0
        for x in range(width):
            chunk = line[x * step: x * step + step]
            if step == 3:
                chunk += b"\x00" if order == "<" else b""
                chunk = chunk if order == "<" else b"\x00" + chunk
            (p,) = struct.unpack(order + "I", chunk)
            out += bytes(((p & red_mask) >> rs, (p & green_mask) >> gs, (p & blue_mask) >> bs))
        rows.append(bytes(out))

    def chunk(tag, body):
        return struct.pack(">I", len(body)) + tag + body + struct.pack(">I", zlib.crc32(tag + body) & 0xFFFFFFFF)

    png = b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", width, height, 8, 2, 0, 0, 0))
    png += chunk(b"IDAT", zlib.compress(b"".join(rows), 6)) + chunk(b"IEND", b"")
    open(dst, "wb").write(png)


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2])
