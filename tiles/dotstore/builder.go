package dotstore

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync"
	"unsafe"
)

// BuilderOptions bound a Builder.
type BuilderOptions struct {
	// Memory is the number of bytes the builder may hold in keys, counting
	// the radix sort's second buffer (16 bytes a dot in all). Past it, sorted
	// runs are written to SpillDir and merged at the end. 0 means no limit.
	Memory int64
	// SpillDir holds the sorted runs; it must exist when Memory > 0.
	SpillDir string
	// Workers sort in parallel; 0 means 1.
	Workers int
	// Expected, when known, sizes the buffer to fit (a hint, not a cap).
	Expected int
}

// Builder gathers keys from many goroutines into a sorted store within a
// memory budget. The store it builds holds the same keys in the same order
// whether or not it spilled, so the tiles drawn from it are the same.
type Builder struct {
	opt     BuilderOptions
	mu      sync.Mutex
	buf     []uint64
	limit   int // keys that fit in memory; 0 = no limit
	scratch []uint64
	runs    []string
	counts  [MaxCategories]int
	n       int
	err     error
}

// NewBuilder returns an empty builder.
func NewBuilder(opt BuilderOptions) *Builder {
	b := &Builder{opt: opt}
	if opt.Memory > 0 {
		b.limit = int(max(opt.Memory/16, 1<<12))
	}
	c := b.limit
	if opt.Expected > 0 {
		e := opt.Expected + opt.Expected/64 + 1<<12
		if c == 0 || e < c {
			c = e
		}
	}
	if c > 0 {
		b.buf = make([]uint64, 0, c)
	}
	return b
}

// Add copies keys into the builder; it is safe for concurrent use. When the
// budget is full it sorts the buffer and writes it out as a run first.
func (b *Builder) Add(keys []uint64) error {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.err != nil {
		return b.err
	}
	for _, k := range keys {
		b.counts[k&(MaxCategories-1)]++
	}
	b.n += len(keys)
	for len(keys) > 0 {
		if b.limit == 0 {
			b.buf = append(b.buf, keys...)
			return nil
		}
		room := b.limit - len(b.buf)
		if room == 0 {
			if err := b.spill(); err != nil {
				b.err = err
				return err
			}
			continue
		}
		n := min(room, len(keys))
		b.buf = append(b.buf, keys[:n]...)
		keys = keys[n:]
	}
	return nil
}

// Len is the number of keys added so far.
func (b *Builder) Len() int {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.n
}

// Runs is the number of sorted runs written to disk so far.
func (b *Builder) Runs() int {
	b.mu.Lock()
	defer b.mu.Unlock()
	return len(b.runs)
}

func (b *Builder) sortBuf() {
	if cap(b.scratch) < len(b.buf) {
		b.scratch = make([]uint64, len(b.buf), max(len(b.buf), b.limit))
	}
	SortKeys(b.buf, b.scratch[:len(b.buf)], b.opt.Workers)
}

func (b *Builder) spill() error {
	if b.opt.SpillDir == "" {
		return fmt.Errorf("dotstore: memory budget reached and no spill folder set")
	}
	b.sortBuf()
	path := filepath.Join(b.opt.SpillDir, fmt.Sprintf("run-%04d.bin", len(b.runs)))
	if err := writeFileAtomic(path, func(w io.Writer) error { return writeKeys(w, b.buf) }); err != nil {
		return err
	}
	b.runs = append(b.runs, path)
	b.buf = b.buf[:0]
	return nil
}

// Finish sorts what is left and returns the store. With path set, the store
// is also written there (atomically); a builder that spilled needs a path,
// and its store is the merged file, mapped. Run files are removed.
func (b *Builder) Finish(path string) (*Store, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.err != nil {
		return nil, b.err
	}
	defer func() {
		for _, r := range b.runs {
			os.Remove(r)
		}
		b.runs = nil
	}()
	b.sortBuf()
	b.scratch = nil
	if len(b.runs) == 0 {
		s := &Store{keys: b.buf, sorted: true, counts: b.counts}
		s.buildIndex()
		b.buf = nil
		if path != "" {
			if err := s.WriteFile(path); err != nil {
				return nil, err
			}
		}
		return s, nil
	}
	if path == "" {
		return nil, fmt.Errorf("dotstore: a store that spilled to disk needs a file to merge into")
	}
	if err := b.merge(path); err != nil {
		return nil, err
	}
	b.buf = nil
	return Open(path)
}

// merge writes the k-way merge of the run files and the sorted buffer.
func (b *Builder) merge(path string) error {
	var ins []*cursor
	for _, r := range b.runs {
		f, err := os.Open(r)
		if err != nil {
			return fmt.Errorf("dotstore: %w", err)
		}
		defer f.Close()
		c := &cursor{r: bufio.NewReaderSize(f, 1<<20), block: make([]uint64, 1<<16)}
		if err := c.fill(); err != nil {
			return fmt.Errorf("dotstore: %s: %w", r, err)
		}
		if c.ok() {
			ins = append(ins, c)
		}
	}
	if len(b.buf) > 0 {
		ins = append(ins, &cursor{block: b.buf, n: len(b.buf)})
	}
	return writeFileAtomic(path, func(w io.Writer) error {
		if _, err := w.Write(encodeHeader(b.n, &b.counts)); err != nil {
			return err
		}
		h := heap(ins)
		h.init()
		out := make([]uint64, 0, 1<<16)
		for len(h) > 0 {
			c := h[0]
			out = append(out, c.block[c.i])
			if len(out) == cap(out) {
				if err := writeKeys(w, out); err != nil {
					return err
				}
				out = out[:0]
			}
			c.i++
			if c.i == c.n {
				if err := c.fill(); err != nil {
					return err
				}
			}
			if !c.ok() {
				h[0] = h[len(h)-1]
				h = h[:len(h)-1]
			}
			h.down(0)
		}
		return writeKeys(w, out)
	})
}

// cursor reads one sorted run block by block.
type cursor struct {
	r     io.Reader // nil for an in-memory run
	block []uint64
	i, n  int
}

func (c *cursor) ok() bool { return c.i < c.n }

func (c *cursor) fill() error {
	c.i, c.n = 0, 0
	if c.r == nil {
		return nil
	}
	var raw []byte
	if nativeLE {
		raw = unsafe.Slice((*byte)(unsafe.Pointer(&c.block[0])), 8*len(c.block))
	} else {
		raw = make([]byte, 8*len(c.block))
	}
	m, err := io.ReadFull(c.r, raw)
	if err == io.EOF || err == io.ErrUnexpectedEOF {
		err = nil
	}
	if m%8 != 0 {
		return fmt.Errorf("run file cut mid-key")
	}
	c.n = m / 8
	if !nativeLE {
		for i := 0; i < c.n; i++ {
			c.block[i] = uint64(raw[8*i]) | uint64(raw[8*i+1])<<8 | uint64(raw[8*i+2])<<16 | uint64(raw[8*i+3])<<24 |
				uint64(raw[8*i+4])<<32 | uint64(raw[8*i+5])<<40 | uint64(raw[8*i+6])<<48 | uint64(raw[8*i+7])<<56
		}
	}
	return err
}

// heap is a binary min-heap of cursors by their current key.
type heap []*cursor

func (h heap) less(i, j int) bool { return h[i].block[h[i].i] < h[j].block[h[j].i] }

func (h heap) init() {
	for i := len(h)/2 - 1; i >= 0; i-- {
		h.down(i)
	}
}

func (h heap) down(i int) {
	for {
		l := 2*i + 1
		if l >= len(h) {
			return
		}
		m := l
		if r := l + 1; r < len(h) && h.less(r, l) {
			m = r
		}
		if !h.less(m, i) {
			return
		}
		h[i], h[m] = h[m], h[i]
		i = m
	}
}
