package share_test

import (
	"errors"
	"fmt"

	"capbank/web/share"
)

// A design file travels in a link as a token: Encode compresses it into a
// URL-safe string, Decode gives the same bytes back. A token that was cut
// short or edited is an ErrToken, never a guess.
func Example() {
	design := []byte(`{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":500,"duration_s":10}]},"cells":["demo-2v7-650f"]}`)
	token, err := share.Encode(design)
	if err != nil {
		panic(err)
	}
	back, err := share.Decode(token)
	fmt.Println(string(back) == string(design), err)

	_, err = share.Decode(token[:len(token)/2])
	fmt.Println(errors.Is(err, share.ErrToken))
	// Output:
	// true <nil>
	// true
}
