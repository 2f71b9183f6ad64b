package sizing

import (
	"bytes"
	"io"
)

// DecodeDesign reads a design file (JSON) strictly, by DecodeStrict:
// unknown keys, keys in the wrong case, a key given twice, a value of the
// wrong type, trailing data or a truncated file are errors. A decoding
// problem comes back as a ValidationError naming the field path where one
// is known ("design" for the file as a whole), so the command line and the
// web report it like any other problem. An entry of "cells" may be a plain
// string, a library cell's id (see Cell.IsReference). DecodeDesign does not
// validate; call Validate next.
func DecodeDesign(r io.Reader) (*Design, error) {
	data, err := readAll(r)
	if err != nil {
		return nil, ValidationError{{Field: "design", Rule: "read", Message: "could not be read: " + err.Error()}}
	}
	var d Design
	if err := DecodeStrict(data, &d, "design"); err != nil {
		return nil, err
	}
	return &d, nil
}

// readAll is io.ReadAll, reading into a buffer of the right size at once
// when r knows how much it holds (a bytes or strings Reader).
func readAll(r io.Reader) ([]byte, error) {
	sized, ok := r.(interface{ Len() int })
	if !ok {
		return io.ReadAll(r)
	}
	var b bytes.Buffer
	b.Grow(sized.Len() + bytes.MinRead) // ReadFrom asks for MinRead free bytes to see the end
	_, err := b.ReadFrom(r)
	return b.Bytes(), err
}

func lineCol(data []byte, offset int64) (line, col int) {
	if offset > int64(len(data)) {
		offset = int64(len(data))
	}
	line = 1 + bytes.Count(data[:offset], []byte("\n"))
	col = int(offset) - bytes.LastIndexByte(data[:offset], '\n')
	return line, col
}
