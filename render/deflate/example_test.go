package deflate_test

import (
	"bytes"
	"compress/zlib"
	"fmt"
	"io"

	"github.com/stipple-maps/stipple/render/deflate"
)

// Two RGBA scanlines (filter byte 0, then 8 pixels), mostly empty: the
// stream is a fraction of the input and any zlib reader gets the bytes
// back.
func ExampleEncoder_Zlib() {
	row := make([]byte, 1+4*8)
	copy(row[1+4*3:], []byte{230, 159, 0, 200, 230, 159, 0, 255})
	data := append(append([]byte{}, row...), row...)

	var e deflate.Encoder
	z := e.Zlib(nil, data, 4)
	r, _ := zlib.NewReader(bytes.NewReader(z))
	back, _ := io.ReadAll(r)
	fmt.Println(len(data), "bytes in,", len(z), "out, round trip:", bytes.Equal(back, data))

	// The same rows with their layout given: 1+12 zero bytes, 8 inked,
	// 12+1+12 zero, 8 inked, 12 zero.
	z = e.ZlibRuns(nil, data, []uint32{0, 13, 8, 25, 8, 12})
	r, _ = zlib.NewReader(bytes.NewReader(z))
	back, _ = io.ReadAll(r)
	fmt.Println("from runs, round trip:", bytes.Equal(back, data))
	// Output:
	// 66 bytes in, 34 out, round trip: true
	// from runs, round trip: true
}
