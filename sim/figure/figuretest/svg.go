// Package figuretest provides utilities for testing figures, in the
// manner of net/http/httptest: it reads an SVG document the way the tests
// of every package check one, the whole document through encoding/xml.
// It is imported by tests only, from sim's packages and from the
// end-to-end tests in tests/ alike (which a sim/internal package may not
// serve).
package figuretest

import (
	"bytes"
	"encoding/xml"
	"io"
	"strings"
)

// Parse walks the whole of b with encoding/xml and returns the root
// element's name and the text content, or the decoder's first error.
func Parse(b []byte) (root, text string, err error) {
	d := xml.NewDecoder(bytes.NewReader(b))
	var sb strings.Builder
	for {
		tok, err := d.Token()
		if err == io.EOF {
			return root, sb.String(), nil
		}
		if err != nil {
			return "", "", err
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = e.Name.Local
			}
		case xml.CharData:
			sb.Write(e)
		}
	}
}
