package mapfile

import "testing"

// Binary prefixes: IEC 80000-13:2008, KiB = 2^10, MiB = 2^20, GiB = 2^30
// bytes. KB, MB, GB and K, M, G read as the same powers of 1024, as memory
// sizes are commonly written (JEDEC JESD100B.01 defines KB, MB, GB that way
// for memory; from memory).
func TestParseSize(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
	}{
		{"1000", 1000},
		{"1000B", 1000},
		{"64KiB", 64 << 10},
		{" 64 kb", 64 << 10},
		{"64K", 64 << 10},
		{"512MiB", 512 << 20},
		{"512MB", 512 << 20},
		{"512M", 512 << 20},
		{"2GiB", 2 << 30},
		{"2GB", 2 << 30},
		{"2G", 2 << 30},
		{"2gib", 2 << 30},
		{"1.5G", 3 << 29},
		{"0.5MiB", 1 << 19},
		{".25GB", 1 << 28},
		{"1e3", 1000},
		{"1TiB", 1 << 40},
		{"1024TiB", 1 << 50},
	} {
		if got, err := ParseSize(c.in); err != nil || got != c.want {
			t.Errorf("ParseSize(%q) = %d, %v; want %d", c.in, got, err, c.want)
		}
	}
	for _, bad := range []string{"", "0", "0GB", "-1G", "lots", "GB", "2 GiBs", "0x10M", "1_000M", "infG", "NaN", "1025TiB", "2GiB2", "0.1B"} {
		got, err := ParseSize(bad)
		want := `size "` + bad + `": want a positive amount like 2GiB or 512MiB, at most 1024TiB`
		if err == nil || err.Error() != want {
			t.Errorf("ParseSize(%q) = %d, %v; want error %s", bad, got, err, want)
		}
	}
}
