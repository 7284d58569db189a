//go:build !linux

package dotstore

import (
	"errors"
	"os"
)

type mapping struct{ data []byte }

func mapFile(f *os.File, size int64) (*mapping, error) {
	return nil, errors.New("dotstore: no file mapping on this system")
}

func (m *mapping) release()     {}
func (m *mapping) close() error { return nil }
