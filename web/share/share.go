// Package share turns a design file into a compact, URL-safe token and
// back, so a link can carry a whole design to another capbank with no
// database row: the JSON is compacted, compressed with DEFLATE (RFC 1951,
// compress/flate) and written in unpadded base64url (RFC 4648 §5).
package share

import (
	"bytes"
	"compress/flate"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sync"
)

// MaxDesignBytes bounds the design a token may unpack to, so a small token
// cannot expand into a huge one (a "zip bomb").
const MaxDesignBytes = 4 << 20

// MaxTokenBytes bounds the token of a link; browsers and servers handle
// URLs of a few tens of kilobytes at most (common practice, no source). A
// design with a logged profile of more than a few thousand rows does not
// fit one; it still travels as a posted token (MaxPostedTokenBytes).
const MaxTokenBytes = 64 << 10

// MaxPostedTokenBytes bounds a token a form posts (the page's save,
// download and export controls), which is no URL: any design of up to
// MaxDesignBytes compresses to less.
const MaxPostedTokenBytes = 8 << 20

// ErrToken is wrapped by every decoding problem.
var ErrToken = errors.New("share link")

// Encode returns the token of a design file (any JSON object) for a link:
// a design whose token would be longer than MaxTokenBytes is an error that
// says so.
func Encode(designJSON []byte) (string, error) {
	return encode(designJSON, MaxTokenBytes, flate.BestCompression)
}

// EncodePosted returns the token of a design file for a form to post, up
// to MaxPostedTokenBytes, compressed at DEFLATE's default level (several
// times faster than Encode's best on a long logged profile, for a token a
// few per cent longer); DecodePosted reads it.
func EncodePosted(designJSON []byte) (string, error) {
	return encode(designJSON, MaxPostedTokenBytes, flate.DefaultCompression)
}

// EncodeFast returns the token of a design file for a form to post, up to
// MaxPostedTokenBytes, compressed at DEFLATE's fastest level, for a page
// that writes a design's token each time it shows it; a token no longer
// than MaxTokenBytes serves as a link too. Decode and DecodePosted read
// it as they read the others.
func EncodeFast(designJSON []byte) (string, error) {
	return encode(designJSON, MaxPostedTokenBytes, flate.BestSpeed)
}

// writers keep a DEFLATE writer of each level for the next token: a new
// writer allocates some 650 kB of tables, more than a page it serves.
var writers = map[int]*sync.Pool{}

func init() {
	for _, level := range []int{flate.BestSpeed, flate.DefaultCompression, flate.BestCompression} {
		writers[level] = &sync.Pool{New: func() any {
			w, err := flate.NewWriter(io.Discard, level)
			if err != nil {
				panic("share: " + err.Error())
			}
			return w
		}}
	}
}

func encode(designJSON []byte, limit, level int) (string, error) {
	var compact bytes.Buffer
	if err := json.Compact(&compact, designJSON); err != nil {
		return "", fmt.Errorf("%w: the design is not valid JSON: %v", ErrToken, err)
	}
	var z bytes.Buffer
	pool := writers[level]
	w := pool.Get().(*flate.Writer)
	w.Reset(&z)
	w.Write(compact.Bytes())
	w.Close()
	w.Reset(io.Discard) // let go of z
	pool.Put(w)
	tok := base64.RawURLEncoding.EncodeToString(z.Bytes())
	if len(tok) > limit {
		return "", fmt.Errorf("%w: the design is too large for a link (%d characters, at most %d); save it and share the file instead", ErrToken, len(tok), limit)
	}
	return tok, nil
}

// Decode returns the design file a link's token carries. Every problem is
// an ErrToken with a plain message.
func Decode(token string) ([]byte, error) { return decode(token, MaxTokenBytes) }

// DecodePosted returns the design file a posted token carries (see
// EncodePosted).
func DecodePosted(token string) ([]byte, error) { return decode(token, MaxPostedTokenBytes) }

func decode(token string, limit int) ([]byte, error) {
	if token == "" {
		return nil, fmt.Errorf("%w: the link carries no design", ErrToken)
	}
	if len(token) > limit {
		return nil, fmt.Errorf("%w: the link is too long (%d characters, at most %d)", ErrToken, len(token), limit)
	}
	z, err := base64.RawURLEncoding.DecodeString(token)
	if err != nil {
		return nil, fmt.Errorf("%w: the link is damaged (not base64url: %v); copy it again in full", ErrToken, err)
	}
	r := flate.NewReader(bytes.NewReader(z))
	defer r.Close()
	out, err := io.ReadAll(io.LimitReader(r, MaxDesignBytes+1))
	if err != nil {
		return nil, fmt.Errorf("%w: the link is damaged or cut short (%v); copy it again in full", ErrToken, err)
	}
	if len(out) > MaxDesignBytes {
		return nil, fmt.Errorf("%w: the design in the link is larger than %d bytes", ErrToken, MaxDesignBytes)
	}
	if !json.Valid(out) {
		return nil, fmt.Errorf("%w: the link does not hold a design file", ErrToken)
	}
	return out, nil
}
