package web

import (
	"crypto/sha256"
	"encoding/json"
	"os"
	"strings"
	"testing"

	"capbank/sizing"
	"capbank/web/share"
)

// designToken keeps what it wrote by the design file's hash: the same
// design gives the same token without compressing it again, and the token
// opens as the design.
func TestDesignTokenKeptByHash(t *testing.T) {
	raw, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(strings.NewReader(string(raw)))
	if err != nil {
		t.Fatal(err)
	}
	d.Name = "token memo test: " + t.Name() // a design no other test renders
	data, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	key := sha256.Sum256(data)
	if _, ok := designTokens.get(key); ok {
		t.Fatal("the design's token is kept before it was written")
	}
	tok, note, linkNote := designToken(d)
	if tok == "" || note != "" || linkNote != "" {
		t.Fatalf("token %q, note %q, link note %q", tok, note, linkNote)
	}
	kept, ok := designTokens.get(key)
	if !ok || kept.token != tok {
		t.Fatal("the token was not kept by the design file's hash")
	}
	if again, _, _ := designToken(d); again != tok {
		t.Error("the same design gave another token")
	}
	back, err := share.Decode(tok)
	if err != nil || string(back) != string(data) {
		t.Errorf("the token does not open as the design: %v", err)
	}
}

// The memo holds at most tokenMemoEntries tokens and tokenMemoBytes bytes,
// the oldest leaving first, and never a token over tokenMemoMaxBytes.
func TestTokenMemoBounds(t *testing.T) {
	t.Parallel()
	m := &tokenMemo{m: map[[sha256.Size]byte]tokenResult{}}
	key := func(i int) [sha256.Size]byte { return sha256.Sum256([]byte{byte(i), byte(i >> 8)}) }
	for i := range tokenMemoEntries + 10 {
		m.put(key(i), tokenResult{token: "t"})
	}
	if len(m.m) != tokenMemoEntries || len(m.order) != tokenMemoEntries {
		t.Errorf("%d tokens kept, want %d", len(m.m), tokenMemoEntries)
	}
	if _, ok := m.get(key(0)); ok {
		t.Error("the oldest token is still kept")
	}
	if _, ok := m.get(key(tokenMemoEntries + 9)); !ok {
		t.Error("the newest token is not kept")
	}
	big := strings.Repeat("x", tokenMemoMaxBytes/2)
	for i := range 40 {
		m.put(key(1000+i), tokenResult{token: big})
	}
	if m.bytes > tokenMemoBytes {
		t.Errorf("%d bytes kept, over %d", m.bytes, tokenMemoBytes)
	}
	m.put(key(5000), tokenResult{token: strings.Repeat("x", tokenMemoMaxBytes+1)})
	if _, ok := m.get(key(5000)); ok {
		t.Error("a token over tokenMemoMaxBytes was kept")
	}
}
