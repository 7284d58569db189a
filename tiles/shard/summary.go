package shard

import (
	"encoding/binary"
	"errors"
	"fmt"
	"sort"

	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// Summary counts dots per category in the pixels of one level: Keys[i] is
// the dot key of a pixel's north-west world cell with a category, Counts[i]
// the number of dots of that category in that pixel. Keys are ascending
// and distinct. A pixel of level L is 2^(29−L) world cells wide.
type Summary struct {
	Level  int
	Keys   []uint64
	Counts []uint64
}

// Level is the pixel level of the summaries a layout needs: the pixels of
// zoom Split−1 at the finest tile size drawn.
func (l *Layout) Level() int { return l.Split - 1 + l.Pyramid.tileShift() }

// OwnedKeys returns the part of sorted keys that lies in shard i's blocks:
// one contiguous run, since the shard's blocks are a run of Z-order codes.
func (l *Layout) OwnedKeys(keys []uint64, i int) []uint64 {
	sh := uint(2*(dotstore.WorldBits-l.Split) + dotstore.CatBits)
	first := l.Lo[i] << sh
	a := sort.Search(len(keys), func(k int) bool { return keys[k] >= first })
	b := len(keys)
	if i+1 < l.Shards {
		end := l.Lo[i+1] << sh
		b = a + sort.Search(len(keys)-a, func(k int) bool { return keys[a+k] >= end })
	}
	return keys[a:b]
}

// Summarize counts sorted dot keys per pixel of the given level and
// category.
func Summarize(keys []uint64, level int) *Summary {
	s := &Summary{Level: level}
	if level < 0 || level > dotstore.WorldBits {
		return s
	}
	shift := uint(2*(dotstore.WorldBits-level) + dotstore.CatBits)
	var per [dotstore.MaxCategories]uint64
	for i := 0; i < len(keys); {
		cell := keys[i] >> shift
		j := i
		for j < len(keys) && keys[j]>>shift == cell {
			per[keys[j]&(dotstore.MaxCategories-1)]++
			j++
		}
		for c, n := range per {
			if n > 0 {
				s.Keys = append(s.Keys, cell<<shift|uint64(c))
				s.Counts = append(s.Counts, n)
				per[c] = 0
			}
		}
		i = j
	}
	return s
}

// Dots is the total of the counts.
func (s *Summary) Dots() uint64 {
	var n uint64
	for _, c := range s.Counts {
		n += c
	}
	return n
}

// Merge adds summaries of one level together.
func Merge(parts ...*Summary) (*Summary, error) {
	total := 0
	for _, p := range parts {
		total += len(p.Keys)
	}
	m := newMerger(total)
	for _, p := range parts {
		if err := m.add(p); err != nil {
			return nil, err
		}
	}
	return m.out, nil
}

// merger adds sorted summaries into one, in as little memory as it can:
// the parts of a layout hold disjoint runs of keys, so added in shard
// order each one is appended to slices sized once for all of them; a part
// whose keys interleave with those before it is merged into new slices.
type merger struct {
	out   *Summary
	level bool // out.Level is set
}

// newMerger makes a merger for summaries of about total entries.
func newMerger(total int) *merger {
	return &merger{out: &Summary{Keys: make([]uint64, 0, total), Counts: make([]uint64, 0, total)}}
}

// add merges p (its keys ascending) into the merger's summary.
func (m *merger) add(p *Summary) error {
	o := m.out
	if !m.level {
		o.Level, m.level = p.Level, true
	} else if p.Level != o.Level {
		return fmt.Errorf("shard: summaries of levels %d and %d cannot be merged", o.Level, p.Level)
	}
	if len(p.Keys) == 0 {
		return nil
	}
	if n := len(o.Keys); n == 0 || p.Keys[0] > o.Keys[n-1] {
		for i, k := range p.Keys {
			if n := len(o.Keys); n > 0 && o.Keys[n-1] == k {
				o.Counts[n-1] += p.Counts[i]
				continue
			}
			o.Keys = append(o.Keys, k)
			o.Counts = append(o.Counts, p.Counts[i])
		}
		return nil
	}
	keys := make([]uint64, 0, max(cap(o.Keys), len(o.Keys)+len(p.Keys)))
	counts := make([]uint64, 0, cap(keys))
	push := func(k, c uint64) {
		if n := len(keys); n > 0 && keys[n-1] == k {
			counts[n-1] += c
			return
		}
		keys = append(keys, k)
		counts = append(counts, c)
	}
	a, b := 0, 0
	for a < len(o.Keys) || b < len(p.Keys) {
		if b == len(p.Keys) || (a < len(o.Keys) && o.Keys[a] <= p.Keys[b]) {
			push(o.Keys[a], o.Counts[a])
			a++
		} else {
			push(p.Keys[b], p.Counts[b])
			b++
		}
	}
	o.Keys, o.Counts = keys, counts
	return nil
}

const summaryMagic = "STIPSUM1"

// MarshalBinary encodes the summary: the magic "STIPSUM1", then as
// unsigned varints (encoding/binary) the level, the number of entries, and
// per entry the key's difference from the previous key and the count.
func (s *Summary) MarshalBinary() ([]byte, error) {
	b := make([]byte, 0, 16+6*len(s.Keys))
	b = append(b, summaryMagic...)
	b = binary.AppendUvarint(b, uint64(s.Level))
	b = binary.AppendUvarint(b, uint64(len(s.Keys)))
	prev := uint64(0)
	for i, k := range s.Keys {
		if i > 0 && k <= prev {
			return nil, errors.New("shard: summary keys out of order")
		}
		b = binary.AppendUvarint(b, k-prev)
		b = binary.AppendUvarint(b, s.Counts[i])
		prev = k
	}
	return b, nil
}

// UnmarshalBinary decodes what MarshalBinary wrote, checking the order of
// the keys and capping the entry count by the data's length before
// allocating.
func (s *Summary) UnmarshalBinary(b []byte) error {
	if len(b) < len(summaryMagic) || string(b[:len(summaryMagic)]) != summaryMagic {
		return errors.New("shard: not a summary (no STIPSUM1 header)")
	}
	b = b[len(summaryMagic):]
	next := func() (uint64, error) {
		v, n := binary.Uvarint(b)
		if n <= 0 {
			return 0, errors.New("shard: summary cut short or corrupt")
		}
		b = b[n:]
		return v, nil
	}
	level, err := next()
	if err != nil {
		return err
	}
	if level > dotstore.WorldBits {
		return fmt.Errorf("shard: summary level %d; want at most %d", level, dotstore.WorldBits)
	}
	n, err := next()
	if err != nil {
		return err
	}
	if n > uint64(len(b))/2 { // every entry takes at least two bytes
		return fmt.Errorf("shard: summary claims %d entries in %d bytes", n, len(b))
	}
	s.Level = int(level)
	s.Keys = make([]uint64, n)
	s.Counts = make([]uint64, n)
	prev := uint64(0)
	for i := range s.Keys {
		d, err := next()
		if err != nil {
			return err
		}
		if i > 0 && d == 0 {
			return errors.New("shard: summary keys repeat")
		}
		prev += d
		s.Keys[i] = prev
		if s.Counts[i], err = next(); err != nil {
			return err
		}
	}
	if len(b) != 0 {
		return fmt.Errorf("shard: %d stray bytes after the summary", len(b))
	}
	return nil
}
