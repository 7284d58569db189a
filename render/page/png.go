package page

import (
	"bytes"
	"encoding/binary"
	"errors"
	"hash/crc32"
	"image"
	"image/png"
	"io"
)

// WritePNG writes the page raster as a PNG that records its resolution.
func (p *Page) WritePNG(w io.Writer) error {
	return EncodePNG(w, p.Raster(), p.spec.DPI)
}

// EncodePNG writes img as a PNG with a pHYs chunk saying it has dpi
// pixels per inch. image/png has no way to write pHYs, so the chunk is
// spliced into its output right after IHDR (the PNG specification, W3C
// 2003, §5.6: pHYs must come before the first IDAT; §11.3.5.3: pixels per
// unit X and Y as 4-byte unsigned integers, then the unit, 1 = metre).
func EncodePNG(w io.Writer, img image.Image, dpi float64) error {
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.DefaultCompression}
	if err := enc.Encode(&buf, img); err != nil {
		return err
	}
	out, err := insertPHYs(buf.Bytes(), PixelsPerMetre(dpi))
	if err != nil {
		return err
	}
	_, err = w.Write(out)
	return err
}

// pngSignature is the 8-byte PNG file signature (§5.2).
const pngSignature = "\x89PNG\r\n\x1a\n"

// insertPHYs returns data with a pHYs chunk of ppm pixels per metre on
// both axes after the IHDR chunk.
func insertPHYs(data []byte, ppm uint32) ([]byte, error) {
	// Signature (8), then IHDR: length 13, "IHDR", 13 bytes, CRC = 25.
	const ihdrEnd = 8 + 4 + 4 + 13 + 4
	if len(data) < ihdrEnd || string(data[:8]) != pngSignature || string(data[12:16]) != "IHDR" {
		return nil, errors.New("page: image/png output does not start with a signature and IHDR")
	}
	chunk := make([]byte, 4+4+9+4)
	binary.BigEndian.PutUint32(chunk[0:], 9)
	copy(chunk[4:], "pHYs")
	binary.BigEndian.PutUint32(chunk[8:], ppm)
	binary.BigEndian.PutUint32(chunk[12:], ppm)
	chunk[16] = 1 // unit: metre
	// The CRC covers the chunk type and data, not the length (§5.3).
	binary.BigEndian.PutUint32(chunk[17:], crc32.ChecksumIEEE(chunk[4:17]))
	out := make([]byte, 0, len(data)+len(chunk))
	out = append(out, data[:ihdrEnd]...)
	out = append(out, chunk...)
	return append(out, data[ihdrEnd:]...), nil
}
