package web

import (
	"crypto/sha256"
	"sync"
)

// designTokens keeps the tokens designToken wrote last, by the SHA-256 of
// the design file they carry: the page and each results fragment htmx
// asks for while the engineer types show the design's link, and a design
// shown again (the first page, a fragment for a field that does not change
// the design file) is compressed once. Tokens longer than tokenMemoMaxBytes
// are not kept, and the oldest go first when the memo holds more than
// tokenMemoEntries or tokenMemoBytes.
var designTokens = &tokenMemo{m: map[[sha256.Size]byte]tokenResult{}}

const (
	tokenMemoEntries  = 256
	tokenMemoBytes    = 8 << 20
	tokenMemoMaxBytes = 1 << 20
)

// tokenResult is what designToken returns for a design file.
type tokenResult struct{ token, note, linkNote string }

type tokenMemo struct {
	mu    sync.Mutex
	m     map[[sha256.Size]byte]tokenResult
	order [][sha256.Size]byte // oldest first
	bytes int
}

func (t *tokenMemo) get(key [sha256.Size]byte) (tokenResult, bool) {
	t.mu.Lock()
	defer t.mu.Unlock()
	r, ok := t.m[key]
	return r, ok
}

func (t *tokenMemo) put(key [sha256.Size]byte, r tokenResult) {
	size := len(r.token) + len(r.note) + len(r.linkNote)
	if size > tokenMemoMaxBytes {
		return
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	if _, ok := t.m[key]; ok {
		return
	}
	t.m[key] = r
	t.order = append(t.order, key)
	t.bytes += size
	for len(t.order) > tokenMemoEntries || t.bytes > tokenMemoBytes {
		old := t.m[t.order[0]]
		t.bytes -= len(old.token) + len(old.note) + len(old.linkNote)
		delete(t.m, t.order[0])
		t.order = t.order[1:]
	}
}
