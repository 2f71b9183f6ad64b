package web

import (
	"testing"

	"capbank/sizing"
)

// The views that do not show the lot analysis size without it, keeping the
// design's other statistics settings and leaving the design itself alone.
func TestWithoutLots(t *testing.T) {
	t.Parallel()
	n := 2500
	d := sizing.Design{Name: "x", Statistics: &sizing.Statistics{Samples: &n, Candidates: "all"}}
	got := withoutLots(d)
	if got.Statistics.Candidates != "none" || got.Statistics.Samples == nil || *got.Statistics.Samples != 2500 || got.Name != "x" {
		t.Errorf("got %+v", got.Statistics)
	}
	if d.Statistics.Candidates != "all" {
		t.Errorf("the design's own statistics changed to %q", d.Statistics.Candidates)
	}
	if plain := withoutLots(sizing.Design{}); plain.Statistics == nil || plain.Statistics.Candidates != "none" {
		t.Errorf("no statistics key: got %+v", plain.Statistics)
	}
}
