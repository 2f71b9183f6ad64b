package fault

import (
	"errors"
	"net/http"
	"testing"
)

// Every code has an HTTP status that is an error status of its class and
// an exit status that is not success; codes the user can fix in what they
// gave are 4xx and exit 2, the server's own trouble 5xx and exit 1 (the
// usage convention: exit 2 for bad input).
func TestTable(t *testing.T) {
	t.Parallel()
	if len(Codes()) != 13 {
		t.Fatalf("%d codes; a new code needs its row here and in the web's problem test", len(Codes()))
	}
	userFixes := map[Code]bool{Malformed: true, Invalid: true, TooLarge: true, MediaType: true}
	for _, c := range Codes() {
		h, x := HTTPStatus(c), ExitStatus(c)
		if http.StatusText(h) == "" || h < 400 {
			t.Errorf("%s: HTTP status %d is not an error status", c, h)
		}
		if (h >= 500) != (c == Unavailable || c == Internal) {
			t.Errorf("%s: HTTP status %d in the wrong class", c, h)
		}
		want := 1
		if userFixes[c] {
			want = 2
		}
		if x != want {
			t.Errorf("%s: exit status %d, want %d", c, x, want)
		}
	}
	if HTTPStatus("no-such-code") != 500 || ExitStatus("no-such-code") != 1 {
		t.Error("an unknown code must be an internal error")
	}
}

func TestAs(t *testing.T) {
	t.Parallel()
	cause := errors.New("disk full")
	err := fmtWrap(&Error{Code: Unavailable, Title: "Nothing was saved", Err: cause})
	fe := As(err)
	if fe == nil || fe.Code != Unavailable || !errors.Is(err, cause) {
		t.Fatalf("As(%v) = %+v", err, fe)
	}
	if As(cause) != nil {
		t.Error("a plain error has no *Error")
	}
}

type wrapped struct{ err error }

func (w wrapped) Error() string { return "while saving: " + w.err.Error() }
func (w wrapped) Unwrap() error { return w.err }

func fmtWrap(err error) error { return wrapped{err} }
