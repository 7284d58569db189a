package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// smallCounts are the people of testdata/small/areas.geojson: areas 007,
// 008, 009, 010 × groups north, south (010 has no geometry and no people).
var smallCounts = [][]float64{{1200, 340}, {15, 2210.5}, {800, 800}, {0, 0}}

// smallExpected computes, in the test and without geo/measure, the measures
// stipple measure must print for testdata/small. Formulas: entropy
// Σ π ln(1/π) (Theil 1972); H = Σ_j t_j (E − E_j)/(T E) (Theil & Finizza
// 1971; Reardon & Firebaugh 2002); M = E − Σ_j (t_j/T) E_j (Reardon &
// Firebaugh 2002); D = ½ Σ_j |n_j/N − s_j/S| (Duncan & Duncan 1955);
// xPy = Σ_j (x_j/X)(y_j/t_j) (Massey & Denton 1988).
func smallExpected() (areaE []float64, e, h, m, d float64, p [2][2]float64) {
	ent := func(row []float64) float64 {
		var t, s float64
		for _, v := range row {
			t += v
		}
		for _, v := range row {
			if v > 0 {
				s += v / t * math.Log(t/v)
			}
		}
		return s
	}
	var tot [2]float64
	var T float64
	for _, r := range smallCounts {
		tot[0] += r[0]
		tot[1] += r[1]
		T += r[0] + r[1]
	}
	e = ent(tot[:])
	var hs, mean float64
	for _, r := range smallCounts {
		tj := r[0] + r[1]
		ej := ent(r)
		areaE = append(areaE, ej)
		if tj == 0 {
			continue
		}
		hs += tj * (e - ej)
		mean += tj / T * ej
		d += math.Abs(r[0]/tot[0]-r[1]/tot[1]) / 2
		for x := range 2 {
			for y := range 2 {
				p[x][y] += r[x] / tot[x] * r[y] / tj
			}
		}
	}
	return areaE, e, hs / (T * e), e - mean, d, p
}

func TestMeasureSmallMap(t *testing.T) {
	csvPath := filepath.Join(t.TempDir(), "areas.csv")
	var out, errb bytes.Buffer
	code := run(context.Background(), []string{"measure", "../../testdata/small/map.toml", "--csv", csvPath}, &out, &errb)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	areaE, e, h, m, d, p := smallExpected()
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', 6, 64) }
	text := out.String()
	for _, want := range []string{
		"areas:   4 (3 with people)\n",
		"people:  5,365.5\n",
		"  H = " + f(h) + "   Theil's entropy index H:",
		"  M = " + f(m) + "   Mutual information index M:",
		"  E = " + f(e) + "   Entropy E:",
		"    D North side / South side = " + f(d) + "\n",
		"    isolation of North side = " + f(p[0][0]) + "\n",
		"    exposure of North side to South side = " + f(p[0][1]) + "\n",
		"    exposure of South side to North side = " + f(p[1][0]) + "\n",
		"    isolation of South side = " + f(p[1][1]) + "\n",
		// Most diverse first: 009 (equal shares, ln 2), then 007, then 008.
		"  1. 009  people 1,600  entropy " + f(areaE[2]) + "  normalised 1.000000  largest North side (0.500000)\n",
		"  2. 007  people 1,540  entropy " + f(areaE[0]) + "  normalised " + f(areaE[0]/math.Ln2) + "  largest North side (" + f(1200.0/1540) + ")\n",
		"  3. 008  people 2,225.5  entropy " + f(areaE[1]) + "  normalised " + f(areaE[1]/math.Ln2) + "  largest South side (" + f(2210.5/2225.5) + ")\n",
		"two of the five dimensions of segregation Massey & Denton (1988) name",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("output lacks %q:\n%s", want, text)
		}
	}
	if strings.Contains(text, "  4. ") {
		t.Errorf("an area without people is listed among the most diverse:\n%s", text)
	}
	// Checked by hand: 009 holds 800 and 800, so its entropy is ln 2.
	if math.Abs(areaE[2]-math.Ln2) > 1e-15 {
		t.Fatalf("test arithmetic: E_009 = %v", areaE[2])
	}

	b, err := os.ReadFile(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	wantHead := "id,people,share_n,share_s,entropy,entropy_normalised,largest_group,largest_share"
	if got := strings.Join(rows[0], ","); got != wantHead {
		t.Fatalf("header %q, want %q", got, wantHead)
	}
	ids := []string{"007", "008", "009", "010"}
	if len(rows) != 1+len(ids) {
		t.Fatalf("%d rows, want %d", len(rows), 1+len(ids))
	}
	for j, r := range rows[1:] {
		c := smallCounts[j]
		tj := c[0] + c[1]
		if r[0] != ids[j] {
			t.Errorf("row %d: id %q, want %q", j+1, r[0], ids[j])
		}
		want := []float64{tj, 0, 0, areaE[j], areaE[j] / math.Ln2}
		largest, share := "", ""
		if tj > 0 {
			want[1], want[2] = c[0]/tj, c[1]/tj
			largest, share = "n", strconv.FormatFloat(max(c[0], c[1])/tj, 'f', -1, 64)
			if c[1] > c[0] {
				largest = "s"
			}
		}
		for i, w := range want {
			got, err := strconv.ParseFloat(r[1+i], 64)
			if err != nil || math.Abs(got-w) > 1e-12 {
				t.Errorf("row %d (%s) column %s: %q, want %v", j+1, ids[j], rows[0][1+i], r[1+i], w)
			}
		}
		if r[6] != largest || r[7] != share {
			t.Errorf("row %d (%s): largest %q %q, want %q %q", j+1, ids[j], r[6], r[7], largest, share)
		}
	}
}

// Text cells that a spreadsheet would read as a formula are neutralised:
// OWASP "CSV Injection" — cells beginning with =, +, -, @, tab or carriage
// return are prefixed with a single quote, and the cell is quoted.
func TestMeasureCSVInjection(t *testing.T) {
	// The cell rule itself is tested with tiles.WriteCSVRow (tiles/csv_test.go).
	// End to end: hostile ids read back as the neutralised text.
	dir := t.TempDir()
	var feats []string
	hostile := []string{"=HYPERLINK(1)", "+7", "-3", "@x", "\tt", "plain"}
	for i, id := range hostile {
		idJSON := strconv.Quote(id)
		x := float64(i) * 0.01
		feats = append(feats, fmt.Sprintf(`{"type":"Feature","properties":{"code":%s,"north":%d,"south":%d},"geometry":{"type":"Polygon","coordinates":[[[%v,-30],[%v,-30],[%v,-29.99],[%v,-29.99],[%v,-30]]]}}`,
			idJSON, 10+i, 20, -140+x, -139.995+x, -139.995+x, -140+x, -140+x))
	}
	input := filepath.Join(dir, "hostile.geojson")
	if err := os.WriteFile(input, []byte(`{"type":"FeatureCollection","features":[`+strings.Join(feats, ",")+`]}`), 0o644); err != nil {
		t.Fatal(err)
	}
	mapPath := writeMap(t, input, filepath.Join(dir, "out"), "")
	csvPath := filepath.Join(dir, "areas.csv")
	var out, errb bytes.Buffer
	if code := run(context.Background(), []string{"measure", mapPath, "--csv", csvPath}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	b, err := os.ReadFile(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for i, id := range hostile {
		want := "'" + id
		if id == "plain" {
			want = id
		}
		if rows[1+i][0] != want {
			t.Errorf("row %d: id %q, want %q", i+1, rows[1+i][0], want)
		}
	}
}

func TestMeasureUsage(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run(context.Background(), []string{"measure"}, &out, &errb); code != 2 {
		t.Errorf("no map file: exit %d, want 2", code)
	}
	if !strings.Contains(errb.String(), "measure takes one map file") {
		t.Errorf("stderr %q", errb.String())
	}
	errb.Reset()
	if code := run(context.Background(), []string{"measure", filepath.Join(t.TempDir(), "none.toml")}, &out, &errb); code != 1 {
		t.Errorf("missing map file: exit %d, want 1", code)
	}
	if !strings.Contains(errb.String(), "none.toml") {
		t.Errorf("the error does not name the file: %q", errb.String())
	}
}
