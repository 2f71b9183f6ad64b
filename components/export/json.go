package export

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"

	"capbank/sizing"
)

// BOQJSON writes the bill of quantities as JSON, indented by two spaces,
// with a trailing newline: the keys of sizing.BOQ, prices in its currency,
// null for an unpriced line's prices. <, > and & are kept as they are.
func BOQJSON(w io.Writer, b *sizing.BOQ) error {
	if b == nil {
		return errors.New("export: no bill of quantities to write")
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(b); err != nil {
		return fmt.Errorf("cannot write the bill of quantities as JSON: %w", err)
	}
	return nil
}
