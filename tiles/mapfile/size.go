package mapfile

import (
	"fmt"
	"strings"

	"github.com/stipple-maps/stipple/geo"
)

// MaxSize caps a size read by ParseSize: 1 PiB.
const MaxSize = 1 << 50

// sizeUnits are the unit suffixes ParseSize knows, longest first so "MiB"
// is not read as "B". Decimal spellings (KB, MB, GB, TB) count in powers of
// 1024 as memory is counted, like the binary ones (KiB, MiB, GiB, TiB).
var sizeUnits = []struct {
	suffix string
	bytes  float64
}{
	{"TIB", 1 << 40}, {"GIB", 1 << 30}, {"MIB", 1 << 20}, {"KIB", 1 << 10},
	{"TB", 1 << 40}, {"GB", 1 << 30}, {"MB", 1 << 20}, {"KB", 1 << 10},
	{"T", 1 << 40}, {"G", 1 << 30}, {"M", 1 << 20}, {"K", 1 << 10}, {"B", 1},
}

// ParseSize reads a byte count such as "2GiB", "2GB", "512M", "1.5G" or
// "1000000" (bytes): a positive number in the syntax of geo.ParseDecimal,
// then an optional unit, any letter case, space allowed between. K, M, G
// and T count in powers of 1024 with or without the "i". It is the one
// reader of sizes for every flag and map file key.
func ParseSize(s string) (int64, error) {
	t := strings.TrimSpace(strings.ToUpper(s))
	mult := 1.0
	for _, u := range sizeUnits {
		if strings.HasSuffix(t, u.suffix) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suffix)), u.bytes
			break
		}
	}
	v, err := geo.ParseDecimal(t)
	if err != nil || !(v > 0) || v*mult > MaxSize || v*mult < 1 {
		return 0, fmt.Errorf("size %q: want a positive amount like 2GiB or 512MiB, at most 1024TiB", s)
	}
	return int64(v * mult), nil
}
