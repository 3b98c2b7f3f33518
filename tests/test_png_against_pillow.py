"""cage.pngfile against independent PNG decoders: Pillow (PIL.Image) and, for a rendered figure,
matplotlib.image.imread. The file layout checked by hand follows the PNG specification
(W3C, second edition, 2003): the signature, IHDR first with width and height big-endian, the
CRC-32 of every chunk, pHYs in pixels per metre."""
from __future__ import annotations

import io
import struct
import zlib

import numpy as np
import pytest
from PIL import Image

from cage.pngfile import SIGNATURE, png_bytes


def _chunks(data: bytes) -> list[tuple[bytes, bytes]]:
    assert data[:8] == SIGNATURE
    out, i = [], 8
    while i < len(data):
        (n,) = struct.unpack(">I", data[i:i + 4])
        kind, body = data[i + 4:i + 8], data[i + 8:i + 8 + n]
        (crc,) = struct.unpack(">I", data[i + 8 + n:i + 12 + n])
        assert crc == zlib.crc32(kind + body), kind
        out.append((kind, body))
        i += 12 + n
    return out


@pytest.mark.parametrize("channels, mode", [(3, "RGB"), (4, "RGBA")])
def test_pillow_decodes_the_same_pixels(channels, mode):
    rng = np.random.default_rng(7)
    pixels = rng.integers(0, 256, size=(37, 53, channels), dtype=np.uint8)
    pixels[5:20, 10:40] = 255  # a flat patch, as plots have
    data = png_bytes(pixels, dpi=150)
    with Image.open(io.BytesIO(data)) as im:
        im.load()
        assert im.mode == mode
        assert im.size == (53, 37)  # Pillow: (width, height)
        assert np.array_equal(np.asarray(im), pixels)
        assert im.info["dpi"] == pytest.approx((150, 150), abs=0.05)  # pHYs holds whole pixels per metre


def test_chunk_layout_follows_the_specification():
    pixels = np.zeros((2, 3, 3), dtype=np.uint8)
    chunks = _chunks(png_bytes(pixels, dpi=100))
    assert [k for k, _ in chunks] == [b"IHDR", b"pHYs", b"IDAT", b"IEND"]
    assert struct.unpack(">IIBBBBB", chunks[0][1]) == (3, 2, 8, 2, 0, 0, 0)
    assert struct.unpack(">IIB", chunks[1][1]) == (3937, 3937, 1)  # 100 dpi = 3937 per metre
    assert [k for k, _ in _chunks(png_bytes(pixels))] == [b"IHDR", b"IDAT", b"IEND"]


def test_rendered_figure_reads_back_with_matplotlib(tmp_path):
    import matplotlib.image as mpimg
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(2.0, 1.5), dpi=80)
    FigureCanvasAgg(fig)
    fig.add_subplot().plot([0, 1, 2], [2, 0, 1])
    fig.canvas.draw()
    rgba = np.asarray(fig.canvas.buffer_rgba())
    path = tmp_path / "f.png"
    path.write_bytes(png_bytes(rgba[..., :3], dpi=80))
    back = mpimg.imread(path)  # floats 0..1
    assert back.shape == (120, 160, 3)
    assert np.array_equal(np.round(back * 255).astype(np.uint8), rgba[..., :3])


@pytest.mark.parametrize("bad", [np.zeros((2, 2), np.uint8), np.zeros((2, 2, 2), np.uint8),
                                 np.zeros((2, 2, 3), np.float64), np.zeros((0, 2, 3), np.uint8)])
def test_refuses_what_it_cannot_write(bad):
    with pytest.raises(ValueError):
        png_bytes(bad)


def test_refuses_bad_level_and_dpi():
    px = np.zeros((1, 1, 3), np.uint8)
    with pytest.raises(ValueError):
        png_bytes(px, level=10)
    with pytest.raises(ValueError):
        png_bytes(px, dpi=-1)


def test_text_chunks_read_back_with_pillow():
    px = np.zeros((2, 2, 3), np.uint8)
    text = {"Software": "cage 9.9", "Source": "site: Hütte am Berg\nwarning: ±2 °"}
    with Image.open(io.BytesIO(png_bytes(px, text=text))) as im:
        im.load()
        assert im.info["Software"] == "cage 9.9"
        assert im.info["Source"] == text["Source"]  # UTF-8 kept (iTXt)
    kinds = [k for k, _ in _chunks(png_bytes(px, dpi=72, text=text))]
    assert kinds == [b"IHDR", b"pHYs", b"iTXt", b"iTXt", b"IDAT", b"IEND"]  # text before the image data


@pytest.mark.parametrize("keyword", ["", " lead", "x" * 80, "nul\0in", "Hütte", "tab\tin", "two  spaces", "Ω"])
def test_refuses_bad_text_keywords(keyword):
    with pytest.raises(ValueError):
        png_bytes(np.zeros((1, 1, 3), np.uint8), text={keyword: "x"})
