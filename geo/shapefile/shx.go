package shapefile

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
)

// shxScanner walks the index file: one 8-byte entry per record holding the
// record's offset and content length in 16-bit words (big-endian).
type shxScanner struct {
	p     part
	hdr   mainHeader
	count int
	br    *bufio.Reader
}

func newSHXScanner(p part) (*shxScanner, error) {
	h, err := readMainHeader(p)
	if err != nil {
		return nil, err
	}
	body := h.length - mainHeaderLen
	if body%shxEntryLen != 0 {
		return nil, fmt.Errorf("shapefile: %s: declared length %d bytes leaves %d bytes after the header, not a whole number of %d-byte entries", p.name, h.length, body, shxEntryLen)
	}
	sr := io.NewSectionReader(p.r, mainHeaderLen, body)
	return &shxScanner{p: p, hdr: h, count: int(body / shxEntryLen), br: bufio.NewReaderSize(sr, 16<<10)}, nil
}

// next returns the offset and content length, both in bytes, of the next
// record.
func (s *shxScanner) next() (off, length int64, err error) {
	var b [shxEntryLen]byte
	if _, err := io.ReadFull(s.br, b[:]); err != nil {
		return 0, 0, err
	}
	return int64(binary.BigEndian.Uint32(b[0:])) * 2, int64(binary.BigEndian.Uint32(b[4:])) * 2, nil
}
