package shard

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path"
	"reflect"
	"sort"
	"time"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// RatesFormat names the layout of a rates file.
const RatesFormat = "stipple-rates/1"

// ratesFile is a rates file: the format, then the rates.
type ratesFile struct {
	Format string `json:"format"`
	Rates
}

// WriteRates writes r to the file at name, as JSON that ReadRates reads.
func WriteRates(name string, r Rates) error {
	b, err := json.MarshalIndent(ratesFile{Format: RatesFormat, Rates: r}, "", "  ")
	if err != nil {
		return err
	}
	return os.WriteFile(name, append(b, '\n'), 0o644)
}

// ReadRates reads a rates file written by WriteRates (stipple plan
// --probe). Every rate must be a finite number ≥ 0; a rate the file leaves
// out keeps its MeasuredRates value. Every part of a sharded render, the
// plan and the final step must read the same file: the rates move the
// cuts, and the final step refuses parts cut another way.
func ReadRates(name string) (Rates, error) {
	b, err := os.ReadFile(name)
	if err != nil {
		return Rates{}, fmt.Errorf("rates: %w", err)
	}
	f := ratesFile{Rates: MeasuredRates}
	f.Source = ""
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return Rates{}, fmt.Errorf("%s: not a rates file: %v", name, err)
	}
	if f.Format != RatesFormat {
		return Rates{}, fmt.Errorf("%s: field format is %q; want %q", name, f.Format, RatesFormat)
	}
	v := reflect.ValueOf(f.Rates)
	t := v.Type()
	for i := 0; i < t.NumField(); i++ {
		x, ok := v.Field(i).Interface().(float64)
		if !ok {
			continue
		}
		if math.IsNaN(x) || math.IsInf(x, 0) || x < 0 {
			return Rates{}, fmt.Errorf("%s: field %s is %v; want a finite number ≥ 0", name, t.Field(i).Tag.Get("json"), x)
		}
	}
	if f.Source == "" {
		f.Source = name
	}
	return f.Rates, nil
}

// ProbeFiles measures what writing one tile file costs in s: it writes n
// files of size bytes under prefix, perDir to a folder as the pyramid
// writes a zoom's columns (with PutFresh where s offers it, as the pyramid
// does), deletes them, and returns the median wall time of one file, in
// nanoseconds, over eight rounds of n/8 files. The folders stay behind
// empty in a local folder (prefix should be inside the state folder, which
// is never published).
func ProbeFiles(ctx context.Context, s sink.Sink, prefix string, n, size, perDir int) (float64, error) {
	if n < 8 || size < 1 || perDir < 1 {
		return 0, errors.New("rates: probe needs at least 8 files of at least one byte")
	}
	put := s.Put
	if fp, ok := s.(sink.FreshPutter); ok {
		put = fp.PutFresh
	}
	data := make([]byte, size)
	for i := range data {
		data[i] = byte(i*131 + i>>8) // not all zeros, in case a store compresses
	}
	const rounds = 8
	per := n / rounds
	var paths []string
	ns := make([]float64, 0, rounds)
	for r := 0; r < rounds; r++ {
		start := time.Now()
		for i := 0; i < per; i++ {
			k := r*per + i
			p := path.Join(prefix, fmt.Sprint(k/perDir), fmt.Sprint(k%perDir)+".png")
			if err := put(ctx, p, data, "image/png", ""); err != nil {
				return 0, fmt.Errorf("rates: probe: %w", err)
			}
			paths = append(paths, p)
		}
		ns = append(ns, float64(time.Since(start).Nanoseconds())/float64(per))
	}
	for _, p := range paths {
		if err := s.Delete(ctx, p); err != nil {
			return 0, fmt.Errorf("rates: probe: %w", err)
		}
	}
	sort.Float64s(ns)
	return (ns[rounds/2-1] + ns[rounds/2]) / 2, nil
}
