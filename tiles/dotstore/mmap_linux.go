//go:build linux

package dotstore

import (
	"os"
	"syscall"
)

type mapping struct{ data []byte }

func mapFile(f *os.File, size int64) (*mapping, error) {
	data, err := syscall.Mmap(int(f.Fd()), 0, int(size), syscall.PROT_READ, syscall.MAP_SHARED)
	if err != nil {
		return nil, err
	}
	return &mapping{data: data}, nil
}

// release drops the mapping's resident pages (MADV_DONTNEED keeps the file
// and the page cache; the next read of a page maps it again).
func (m *mapping) release() { _ = syscall.Madvise(m.data, syscall.MADV_DONTNEED) }

func (m *mapping) close() error { return syscall.Munmap(m.data) }
