"""Image loading with size limits and header checks.

``load_image`` reads PNG, JPEG, TIFF and BMP files (8- and 16-bit, grey or colour) and returns
a float64 grey image in [0, 1] (docs/conventions.md). Before anything is decoded the header is
read and checked: the pixel count must not exceed ``max_pixels`` and the header must not claim
more data than the file can hold (a truncated file or a "decompression bomb"). Every failure
is an :class:`~profilecheck.errors.ImageError` whose one-line message names the file and the
reason.
"""

from __future__ import annotations

from typing import Any

import os
import struct
from pathlib import Path

import numpy as np

from ..errors import ImageError

__all__ = ["load_image", "DEFAULT_MAX_PIXELS", "read_header_size"]

#: Default pixel limit (width x height) of :func:`load_image`.
DEFAULT_MAX_PIXELS = 100_000_000

# Deflate cannot compress better than about 1032:1 (RFC 1951: a 258-byte match costs at
# least 2 bits); a PNG whose raw size exceeds this times the file size is not a real image.
_DEFLATE_MAX_RATIO = 1032

# A generous bound for the TIFF codecs (LZW with 12-bit codes stays below ~2700:1, PackBits
# 64:1); beyond it the header cannot be honest.
_TIFF_MAX_RATIO = 5000

# Rec. 601 luma weights (ITU-R BT.601), applied to linear code values as docs/conventions.md
# says; cv2 returns channels in B, G, R(, A) order.
_BGR_WEIGHTS = np.array([0.114, 0.587, 0.299])


def _fail(path: Path, reason: str) -> ImageError:
    return ImageError(f"{path.name}: {reason}")


def _png_size(data: bytes, path: Path) -> tuple[int, int]:
    # PNG specification (ISO/IEC 15948) 11.2.2: IHDR is the first chunk, 13 bytes of data.
    if len(data) < 33 or data[12:16] != b"IHDR":
        raise _fail(path, "PNG header is damaged (no IHDR chunk)")
    width, height, bit_depth, colour_type = struct.unpack(">IIBB", data[16:26])
    if width == 0 or height == 0:
        raise _fail(path, "PNG header gives a zero image size")
    channels = {0: 1, 2: 3, 3: 1, 4: 2, 6: 4}.get(colour_type)
    if channels is None or bit_depth not in (1, 2, 4, 8, 16):
        raise _fail(path, f"PNG header has an invalid colour type {colour_type} / bit depth {bit_depth}")
    raw_bytes = height * (1 + (width * channels * bit_depth + 7) // 8)
    if raw_bytes > _DEFLATE_MAX_RATIO * len(data) + 4096:
        raise _fail(path, f"PNG header claims {width} x {height} pixels, more than a "
                          f"{len(data)}-byte file can hold (damaged or hostile file)")
    if b"IEND" not in data[-32:]:
        raise _fail(path, "PNG file is truncated (no end marker); copy it again from the camera")
    return width, height


def _bmp_size(data: bytes, path: Path) -> tuple[int, int]:
    # BITMAPFILEHEADER (14 bytes) + BITMAPINFOHEADER: width/height int32, bpp uint16,
    # compression uint32 (0 = BI_RGB uncompressed, 3 = BI_BITFIELDS).
    if len(data) < 30:
        raise _fail(path, "BMP header is truncated")
    offset = struct.unpack("<I", data[10:14])[0]
    dib = struct.unpack("<I", data[14:18])[0]
    if dib == 12:
        width, height, _planes, bpp = struct.unpack("<HHHH", data[18:26])
        compression = 0
    else:
        if len(data) < 34:
            raise _fail(path, "BMP header is truncated")
        width, height, _planes, bpp, compression = struct.unpack("<iiHHI", data[18:34])
    height = abs(height)  # negative height = top-down rows
    if width <= 0 or height == 0:
        raise _fail(path, "BMP header gives an impossible image size")
    if compression in (0, 3):
        stride = ((width * bpp + 31) // 32) * 4
        if offset + stride * height > len(data):
            raise _fail(path, f"BMP header claims {width} x {height} pixels, more than the "
                              f"{len(data)}-byte file holds (truncated file)")
    return width, height


def _tiff_size(data: bytes, path: Path) -> tuple[int, int]:
    # TIFF 6.0 section 2: byte order, magic 42, offset of the first IFD; tags 256 ImageWidth,
    # 257 ImageLength, 259 Compression, 273 StripOffsets, 279 StripByteCounts.
    endian = "<" if data[:2] == b"II" else ">"
    if len(data) < 8:
        raise _fail(path, "TIFF header is truncated")
    ifd = struct.unpack(endian + "I", data[4:8])[0]
    if ifd + 2 > len(data):
        raise _fail(path, "TIFF file is truncated (directory missing)")
    n_entries = struct.unpack(endian + "H", data[ifd:ifd + 2])[0]
    if ifd + 2 + 12 * n_entries > len(data):
        raise _fail(path, "TIFF file is truncated (directory cut short)")
    sizes = {1: 1, 3: 2, 4: 4}
    tags: dict[int, list[int]] = {}
    for i in range(n_entries):
        entry = data[ifd + 2 + 12 * i: ifd + 14 + 12 * i]
        tag, typ, count = struct.unpack(endian + "HHI", entry[:8])
        size = sizes.get(typ)
        if size is None or tag not in (256, 257, 258, 259, 273, 277, 279):
            continue
        fmt = {1: "B", 2: "H", 4: "I"}[size]
        if size * count <= 4:
            vals = struct.unpack(endian + fmt * count, entry[8:8 + size * count])
        else:
            start = struct.unpack(endian + "I", entry[8:12])[0]
            if start + size * count > len(data):
                raise _fail(path, "TIFF file is truncated (tag data missing)")
            vals = struct.unpack(endian + fmt * count, data[start:start + size * count])
        tags[tag] = list(vals)
    if 256 not in tags or 257 not in tags:
        raise _fail(path, "TIFF header gives no image size")
    width, height = tags[256][0], tags[257][0]
    if width == 0 or height == 0:
        raise _fail(path, "TIFF header gives a zero image size")
    if 273 in tags and 279 in tags:
        for off, cnt in zip(tags[273], tags[279]):
            if off + cnt > len(data):
                raise _fail(path, "TIFF file is truncated (image data cut short)")
    spp = tags.get(277, [1])[0]
    bits = sum(tags.get(258, [8] * spp)[:spp]) or 8
    raw_bytes = width * height * bits // 8
    compression = tags.get(259, [1])[0]
    stored = sum(tags.get(279, [len(data)]))
    if compression == 1 and raw_bytes > stored:
        raise _fail(path, f"TIFF header claims {width} x {height} pixels, more than the stored "
                          f"image data holds (truncated file)")
    if raw_bytes > _TIFF_MAX_RATIO * len(data) + 4096:
        raise _fail(path, f"TIFF header claims {width} x {height} pixels, more than a "
                          f"{len(data)}-byte file can hold (damaged or hostile file)")
    return width, height


def _jpeg_size(data: bytes, path: Path) -> tuple[int, int]:
    # ITU-T T.81 B.2.2: the SOFn segment (markers C0-CF except C4, C8, CC) holds height, width.
    i = 2
    n = len(data)
    while i + 4 <= n:
        if data[i] != 0xFF:
            raise _fail(path, "JPEG file is damaged (bad marker)")
        marker = data[i + 1]
        if marker == 0xFF:
            i += 1
            continue
        if marker in (0xD8, 0x01) or 0xD0 <= marker <= 0xD7:
            i += 2
            continue
        seg_len = struct.unpack(">H", data[i + 2:i + 4])[0]
        if 0xC0 <= marker <= 0xCF and marker not in (0xC4, 0xC8, 0xCC):
            if i + 9 > n:
                break
            height, width = struct.unpack(">HH", data[i + 5:i + 9])
            if width == 0 or height == 0:
                raise _fail(path, "JPEG header gives a zero image size")
            if b"\xff\xd9" not in data[-64:]:
                raise _fail(path, "JPEG file is truncated (no end marker); copy it again from the camera")
            return width, height
        i += 2 + seg_len
    raise _fail(path, "JPEG file is truncated or damaged (no frame header)")


def read_header_size(data: bytes, path: Path | str = "image") -> tuple[str, int, int]:
    """Identify the format and read the image size from the header, without decoding.

    Parameters
    ----------
    data : bytes
        The whole file.
    path : path-like
        Used only in error messages.

    Returns
    -------
    (fmt, width, height) : (str, int, int)
        ``fmt`` is one of ``'png'``, ``'jpeg'``, ``'tiff'``, ``'bmp'``.

    Raises
    ------
    ImageError
        Not one of the four formats, or a damaged, truncated or inconsistent header.
    """
    path = Path(path)
    if data[:8] == b"\x89PNG\r\n\x1a\n":
        return ("png",) + _png_size(data, path)
    if data[:3] == b"\xff\xd8\xff":
        return ("jpeg",) + _jpeg_size(data, path)
    if data[:4] in (b"II*\x00", b"MM\x00*"):
        return ("tiff",) + _tiff_size(data, path)
    if data[:2] == b"BM":
        return ("bmp",) + _bmp_size(data, path)
    raise _fail(path, "not a PNG, JPEG, TIFF or BMP image")


def load_image(path: str | os.PathLike, *, max_pixels: int = DEFAULT_MAX_PIXELS,
               dtype: Any = np.float64) -> np.ndarray:
    """Load an image file as a float grey image in [0, 1].

    Parameters
    ----------
    path : str or os.PathLike
        PNG, JPEG, TIFF or BMP file, 8 or 16 bits per sample, grey or colour (alpha ignored).
    max_pixels : int, optional
        Refuse images with more than this many pixels (width x height). Default 100 MP.
    dtype : numpy.float64 (default) or numpy.float32
        Sample type of the result. float32 holds 8- and 16-bit codes to 6e-8 of full
        scale, far below any camera's noise, with half the memory (the measurements load
        their pictures so; :func:`find_edges` works in float32 in any case).

    Returns
    -------
    img : ndarray, shape (rows, cols), float64 (or float32, see ``dtype``)
        Grey levels in [0, 1]: 8-bit codes / 255, 16-bit codes / 65535; colour is converted
        with the Rec. 601 weights 0.299 R + 0.587 G + 0.114 B. ``img[row, col]``, origin
        top-left (docs/conventions.md). No gamma is undone here (see :func:`linearise`), and
        EXIF orientation is ignored: pixels stay where the sensor put them.

    Raises
    ------
    TypeError
        ``path`` is not a string or path, or ``max_pixels`` is not an integer.
    ValueError
        ``max_pixels`` < 1.
    ImageError
        Missing or unreadable file, unknown format, damaged or truncated file, a header that
        claims more than the file can hold, more than ``max_pixels`` pixels, or an unsupported
        sample format (e.g. floating-point TIFF).

    Notes
    -----
    The header is parsed before decoding (PNG IHDR, BMP info header, TIFF first directory,
    JPEG SOF segment) so a hostile or damaged file is refused before any memory is spent on
    it. Decoding uses ``cv2.imdecode`` with ``IMREAD_UNCHANGED``.

    Examples
    --------
    >>> img = load_image("sample_images/pin.png")  # doctest: +SKIP
    >>> img.dtype, float(img.min()) >= 0.0, float(img.max()) <= 1.0  # doctest: +SKIP
    (dtype('float64'), True, True)
    """
    if not isinstance(path, (str, os.PathLike)):
        raise TypeError(f"path must be a str or os.PathLike, got {type(path).__name__}")
    if isinstance(max_pixels, bool) or not isinstance(max_pixels, (int, np.integer)):
        raise TypeError(f"max_pixels must be an int, got {type(max_pixels).__name__}")
    if max_pixels < 1:
        raise ValueError(f"max_pixels must be >= 1, got {max_pixels}")
    out_t = np.dtype(dtype) if dtype in (np.float32, np.float64, "float32", "float64") else None
    if out_t is None:
        raise ValueError(f"dtype must be numpy.float64 or numpy.float32, got {dtype!r}")
    p = Path(path)
    if not p.exists():
        raise _fail(p, "file not found")
    if not p.is_file():
        raise _fail(p, "is not a file")
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise _fail(p, f"cannot be read ({exc.strerror or exc})") from None
    if len(data) == 0:
        raise _fail(p, "file is empty")
    fmt, width, height = read_header_size(data, p)
    if width * height > max_pixels:
        raise _fail(p, f"image is {width} x {height} = {width * height / 1e6:.1f} MP, over the "
                       f"limit of {max_pixels / 1e6:.1f} MP")

    import cv2  # local: keeps `import profilecheck` light

    buf = np.frombuffer(data, dtype=np.uint8)
    try:
        arr = cv2.imdecode(buf, cv2.IMREAD_UNCHANGED)
    except cv2.error:
        arr = None
    if arr is None:
        raise _fail(p, f"{fmt.upper()} data cannot be decoded (damaged or truncated file)")
    if arr.ndim == 2:
        arr = arr[:, :, None]
    if arr.shape[0] != height or arr.shape[1] != width:
        raise _fail(p, f"decoded size {arr.shape[1]} x {arr.shape[0]} does not match the header "
                       f"({width} x {height}); the file is damaged")
    if arr.dtype == np.uint8:
        scale = 255.0
    elif arr.dtype == np.uint16:
        scale = 65535.0
    else:
        raise _fail(p, f"unsupported sample format {arr.dtype} (use 8- or 16-bit integer images)")
    channels = arr.shape[2]
    if channels in (1, 2):
        # one table look-up per pixel: the table holds code / scale, the very values the
        # float conversion and division below give, in one pass over the image
        codes = np.ascontiguousarray(arr[:, :, 0])
        table = (np.arange(int(scale) + 1, dtype=np.float64) / scale).astype(out_t)
        if codes.dtype == np.uint8:
            return cv2.LUT(codes, table)
        return np.take(table, codes)
    a = arr.astype(np.float64)
    if channels in (3, 4):
        grey = a[:, :, :3] @ _BGR_WEIGHTS
    else:
        raise _fail(p, f"unsupported number of channels ({channels})")
    grey /= scale
    np.clip(grey, 0.0, 1.0, out=grey)
    return grey.astype(out_t, copy=False)

