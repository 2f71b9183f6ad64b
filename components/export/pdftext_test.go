package export

import (
	"sync"
	"testing"
)

// TestPDFTextConcurrent writes text from many goroutines at once, as a web
// server writing several reports does: fpdf's translator shares a buffer,
// so unguarded this corrupts the text or panics (seen in CI).
func TestPDFTextConcurrent(t *testing.T) {
	t.Parallel()
	const want = "R = 2.8 mOhm, 3 µF × 2 -> 10^7 s"
	var wg sync.WaitGroup
	errs := make(chan string, 64)
	for range 8 {
		wg.Go(func() {
			for range 500 {
				if got := pdfText("R = 2.8 mΩ, 3 µF × 2 → 10⁷ s"); got != toCP1252(want) {
					errs <- got
					return
				}
			}
		})
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Errorf("concurrent pdfText gave %q", e)
	}
}
