package dotstore

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"sync/atomic"
	"unsafe"
)

// A store file is a 4096-byte header followed by the sorted keys as
// little-endian uint64. The header holds the magic "STIPDOT1", the number of
// keys and the number of keys per category (all little-endian uint64); the
// rest is zero. The key area starts on a page boundary so it can be mapped.
const (
	fileMagic  = "STIPDOT1"
	headerSize = 4096
)

// nativeLE reports whether this machine stores uint64 little-endian, so key
// slices can be written and mapped as they are.
var nativeLE = binary.NativeEndian.Uint16([]byte{1, 0}) == 1

func encodeHeader(n int, counts *[MaxCategories]int) []byte {
	h := make([]byte, headerSize)
	copy(h, fileMagic)
	binary.LittleEndian.PutUint64(h[8:], uint64(n))
	for c := 0; c < MaxCategories; c++ {
		binary.LittleEndian.PutUint64(h[16+8*c:], uint64(counts[c]))
	}
	return h
}

func decodeHeader(path string, h []byte, size int64) (n int, counts [MaxCategories]int, err error) {
	if len(h) < headerSize || string(h[:8]) != fileMagic {
		return 0, counts, fmt.Errorf("dotstore: %s: not a dot store file", path)
	}
	n64 := binary.LittleEndian.Uint64(h[8:])
	if size != headerSize+8*int64(n64) || n64 > 1<<40 {
		return 0, counts, fmt.Errorf("dotstore: %s: header says %d keys but the file has %d bytes", path, n64, size)
	}
	sum := uint64(0)
	for c := 0; c < MaxCategories; c++ {
		v := binary.LittleEndian.Uint64(h[16+8*c:])
		counts[c] = int(v)
		sum += v
	}
	if sum != n64 {
		return 0, counts, fmt.Errorf("dotstore: %s: category counts add to %d, not %d", path, sum, n64)
	}
	return int(n64), counts, nil
}

// keyBytes views keys as bytes in file order, converting on big-endian
// machines into buf.
func keyBytes(keys []uint64, buf []byte) []byte {
	if len(keys) == 0 {
		return nil
	}
	if nativeLE {
		return unsafe.Slice((*byte)(unsafe.Pointer(&keys[0])), 8*len(keys))
	}
	buf = buf[:0]
	for _, k := range keys {
		buf = binary.LittleEndian.AppendUint64(buf, k)
	}
	return buf
}

// writeKeys writes keys in file order, in blocks.
func writeKeys(w io.Writer, keys []uint64) error {
	const block = 1 << 16
	var buf []byte
	if !nativeLE {
		buf = make([]byte, 0, 8*block)
	}
	for len(keys) > 0 {
		n := min(block, len(keys))
		if _, err := w.Write(keyBytes(keys[:n], buf)); err != nil {
			return err
		}
		keys = keys[n:]
	}
	return nil
}

// WriteFile writes the sorted store to path atomically: a temporary file in
// the same folder, renamed into place once complete.
func (s *Store) WriteFile(path string) error {
	if !s.sorted {
		return errors.New("dotstore: WriteFile of an unsorted store")
	}
	return writeFileAtomic(path, func(w io.Writer) error {
		if _, err := w.Write(encodeHeader(len(s.keys), &s.counts)); err != nil {
			return err
		}
		return writeKeys(w, s.keys)
	})
}

func writeFileAtomic(path string, fill func(w io.Writer) error) error {
	tmp := path + ".tmp"
	f, err := os.Create(tmp)
	if err != nil {
		return fmt.Errorf("dotstore: %w", err)
	}
	bw := bufio.NewWriterSize(f, 1<<20)
	err = fill(bw)
	if err == nil {
		err = bw.Flush()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp, path)
	}
	if err != nil {
		os.Remove(tmp)
		return fmt.Errorf("dotstore: %s: %w", path, err)
	}
	return nil
}

// Open maps the store file at path (or reads it into memory where mapping
// is not available). The store must be closed when done.
func Open(path string) (*Store, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("dotstore: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("dotstore: %w", err)
	}
	h := make([]byte, headerSize)
	if _, err := io.ReadFull(f, h); err != nil {
		return nil, fmt.Errorf("dotstore: %s: not a dot store file (%v)", path, err)
	}
	n, counts, err := decodeHeader(path, h, st.Size())
	if err != nil {
		return nil, err
	}
	s := &Store{sorted: true, counts: counts}
	if n == 0 {
		return s, nil
	}
	if nativeLE {
		m, err := mapFile(f, st.Size())
		if err == nil {
			s.m = m
			s.keys = unsafe.Slice((*uint64)(unsafe.Pointer(&m.data[headerSize])), n)
			s.touched = make([]atomic.Uint64, (n>>touchShift)/64+1)
			s.buildIndex()
			return s, nil
		}
	}
	// No mapping: read the keys into memory.
	s.keys = make([]uint64, n)
	br := bufio.NewReaderSize(f, 1<<20)
	var b [8]byte
	for i := range s.keys {
		if _, err := io.ReadFull(br, b[:]); err != nil {
			return nil, fmt.Errorf("dotstore: %s: %w", path, err)
		}
		s.keys[i] = binary.LittleEndian.Uint64(b[:])
	}
	s.buildIndex()
	return s, nil
}
