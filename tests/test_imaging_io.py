"""load_image: formats, bit depths, grey conversion, and every kind of bad file."""

from __future__ import annotations

import struct
import zlib

import cv2
import numpy as np
import pytest
from numpy.testing import assert_allclose

from profilecheck.errors import ImageError
from profilecheck.imaging import load_image


def _ramp(rows=30, cols=47, dtype=np.uint8):
    top = 255 if dtype == np.uint8 else 65535
    r, c = np.mgrid[0:rows, 0:cols]
    return ((r * 7 + c * 3) % (top + 1)).astype(dtype) if dtype == np.uint8 else \
        ((r * 1301 + c * 977) % (top + 1)).astype(dtype)


@pytest.mark.parametrize("ext", [".png", ".tif", ".bmp"])
def test_lossless_8bit_round_trip_non_square(tmp_path, ext):
    a = _ramp()
    p = tmp_path / f"img{ext}"
    assert cv2.imwrite(str(p), a)
    img = load_image(p)
    assert img.shape == (30, 47) and img.dtype == np.float64
    # 8-bit codes scale by 1/255 (docs/conventions.md)
    assert_allclose(img, a / 255.0, rtol=0, atol=1e-12)


@pytest.mark.parametrize("ext", [".png", ".tif"])
def test_16bit_round_trip(tmp_path, ext):
    a = _ramp(dtype=np.uint16)
    p = tmp_path / f"img16{ext}"
    assert cv2.imwrite(str(p), a)
    assert_allclose(load_image(p), a / 65535.0, rtol=0, atol=1e-12)


def test_jpeg_loads_close_to_original(tmp_path):
    a = np.full((40, 64), 128, np.uint8)
    a[:, 32:] = 200
    p = tmp_path / "img.jpg"
    assert cv2.imwrite(str(p), a, [cv2.IMWRITE_JPEG_QUALITY, 95])
    img = load_image(p)
    assert img.shape == (40, 64)
    assert abs(img[5, 5] - 128 / 255) < 3 / 255 and abs(img[5, 60] - 200 / 255) < 3 / 255


def test_colour_uses_rec601_weights(tmp_path):
    # ITU-R BT.601 luma: Y = 0.299 R + 0.587 G + 0.114 B
    bgr = np.zeros((10, 12, 3), np.uint8)
    bgr[..., 0], bgr[..., 1], bgr[..., 2] = 40, 100, 220  # B, G, R
    p = tmp_path / "c.png"
    assert cv2.imwrite(str(p), bgr)
    expected = (0.299 * 220 + 0.587 * 100 + 0.114 * 40) / 255
    assert_allclose(load_image(p), expected, rtol=0, atol=1e-12)
    # with alpha: alpha is ignored
    bgra = np.dstack([bgr, np.full((10, 12), 7, np.uint8)])
    p2 = tmp_path / "ca.png"
    assert cv2.imwrite(str(p2), bgra)
    assert_allclose(load_image(p2), expected, rtol=0, atol=1e-12)


def _one_line(msg: str, name: str):
    assert "\n" not in msg
    assert name in msg


def test_missing_directory_and_empty(tmp_path):
    with pytest.raises(ImageError, match="not found") as e:
        load_image(tmp_path / "nope.png")
    _one_line(str(e.value), "nope.png")
    with pytest.raises(ImageError, match="not a file"):
        load_image(tmp_path)
    empty = tmp_path / "empty.png"
    empty.write_bytes(b"")
    with pytest.raises(ImageError, match="empty") as e:
        load_image(empty)
    _one_line(str(e.value), "empty.png")


def test_not_an_image(tmp_path):
    p = tmp_path / "notes.png"
    p.write_text("tool height notes, not a picture\n")
    with pytest.raises(ImageError, match="not a PNG, JPEG, TIFF or BMP") as e:
        load_image(p)
    _one_line(str(e.value), "notes.png")


@pytest.mark.parametrize("ext,keep", [(".png", 0.5), (".jpg", 0.5), (".bmp", 0.6), (".tif", 0.5)])
def test_truncated_files(tmp_path, ext, keep):
    rng = np.random.default_rng(0)
    a = rng.integers(0, 255, (120, 160), dtype=np.uint8)  # noise: no compression to speak of
    p = tmp_path / f"full{ext}"
    assert cv2.imwrite(str(p), a)
    data = p.read_bytes()
    q = tmp_path / f"cut{ext}"
    q.write_bytes(data[: int(len(data) * keep)])
    with pytest.raises(ImageError) as e:
        load_image(q)
    _one_line(str(e.value), f"cut{ext}")


def _png_chunk(kind: bytes, payload: bytes) -> bytes:
    # PNG chunk layout (ISO/IEC 15948 5.3): length, type, data, CRC-32 of type+data
    return struct.pack(">I", len(payload)) + kind + payload + \
        struct.pack(">I", zlib.crc32(kind + payload) & 0xFFFFFFFF)


def test_png_header_claiming_more_than_file_holds(tmp_path):
    ihdr = struct.pack(">IIBBBBB", 60000, 60000, 8, 0, 0, 0, 0)
    idat = zlib.compress(b"\x00" * 1000)
    data = b"\x89PNG\r\n\x1a\n" + _png_chunk(b"IHDR", ihdr) + _png_chunk(b"IDAT", idat) + \
        _png_chunk(b"IEND", b"")
    p = tmp_path / "bomb.png"
    p.write_bytes(data)
    with pytest.raises(ImageError, match="more than") as e:
        load_image(p)
    _one_line(str(e.value), "bomb.png")


def test_pixel_limit(tmp_path):
    p = tmp_path / "big.png"
    assert cv2.imwrite(str(p), np.zeros((100, 200), np.uint8))
    with pytest.raises(ImageError, match="over the limit") as e:
        load_image(p, max_pixels=19_999)
    _one_line(str(e.value), "big.png")
    assert load_image(p, max_pixels=20_000).shape == (100, 200)


def test_bmp_header_claiming_more_than_file_holds(tmp_path):
    p = tmp_path / "small.bmp"
    assert cv2.imwrite(str(p), np.zeros((10, 12), np.uint8))
    data = bytearray(p.read_bytes())
    data[22:26] = struct.pack("<i", 40000)  # height field of BITMAPINFOHEADER
    q = tmp_path / "liar.bmp"
    q.write_bytes(bytes(data))
    with pytest.raises(ImageError, match="more than") as e:
        load_image(q)
    _one_line(str(e.value), "liar.bmp")


def test_bad_calls():
    with pytest.raises(TypeError, match="path"):
        load_image(12)
    with pytest.raises(ValueError, match="max_pixels"):
        load_image("x.png", max_pixels=0)
    with pytest.raises(TypeError, match="max_pixels"):
        load_image("x.png", max_pixels=1.5)


def test_tiff_header_claiming_more_than_file_holds(tmp_path):
    # a minimal little-endian TIFF 6.0 (baseline, uncompressed) whose size tags lie:
    # 20000 x 20000 8-bit grey with a 16-byte strip
    entries = [(256, 4, 1, 20000), (257, 4, 1, 20000), (258, 3, 1, 8), (259, 3, 1, 1),
               (262, 3, 1, 1), (273, 4, 1, 8 + 2 + 12 * 8 + 4), (277, 3, 1, 1),
               (279, 4, 1, 16)]
    ifd = struct.pack("<H", len(entries))
    for tag, typ, count, value in entries:
        val = struct.pack("<HH", value, 0) if typ == 3 else struct.pack("<I", value)
        ifd += struct.pack("<HHI", tag, typ, count) + val
    data = b"II*\x00" + struct.pack("<I", 8) + ifd + struct.pack("<I", 0) + bytes(16)
    p = tmp_path / "liar.tif"
    p.write_bytes(data)
    with pytest.raises(ImageError, match="more than") as e:
        load_image(p, max_pixels=10 ** 9)
    _one_line(str(e.value), "liar.tif")
