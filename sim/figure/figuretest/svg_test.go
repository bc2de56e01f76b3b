package figuretest

import (
	"strings"
	"testing"
)

func TestParse(t *testing.T) {
	for _, tc := range []struct {
		doc, root, text, err string
	}{
		{`<svg xmlns="http://www.w3.org/2000/svg"><title>a</title><text>b</text></svg>`, "svg", "ab", ""},
		{`<?xml version="1.0"?><svg><g/></svg>`, "svg", "", ""},
		{`<svg><text>cut`, "", "", "unexpected EOF"},
		{`<svg></g>`, "", "", "element <svg> closed by </g>"},
	} {
		root, text, err := Parse([]byte(tc.doc))
		switch {
		case tc.err != "":
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("Parse(%q): error %v, want one that says %q", tc.doc, err, tc.err)
			}
		case err != nil:
			t.Errorf("Parse(%q): %v", tc.doc, err)
		case root != tc.root || text != tc.text:
			t.Errorf("Parse(%q) = %q, %q; want %q, %q", tc.doc, root, text, tc.root, tc.text)
		}
	}
}
