package sizing

import (
	"bytes"
	"encoding/json"
	"testing"
)

// BenchmarkDecodeDesign decodes the 86 400-step day design with 100 cells
// (about 3.6 MB of JSON) by DecodeDesign, and reports its speed in MB/s.
func BenchmarkDecodeDesign(b *testing.B) {
	data, err := json.Marshal(dayDesign(100))
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := DecodeDesign(bytes.NewReader(data)); err != nil {
			b.Fatal(err)
		}
	}
}
