package server

import (
	"net/http/httptest"
	"testing"
)

// Browsers keep cookies apart by host, not by port: two shared workbenches
// on one machine must name their control cookies differently, or a
// presenter of both would lose control of one on visiting the other.
func TestControlCookiePerWorkbench(t *testing.T) {
	a := newRolesKey("first-workbench-key-0001")
	b := newRolesKey("second-workbench-key-002")
	if a.cookie == b.cookie {
		t.Fatalf("both workbenches name their cookie %q", a.cookie)
	}
	req := httptest.NewRequest("GET", "/", nil)
	req.Header.Set("Cookie", a.cookie+"="+a.key)
	if !a.controls(req) {
		t.Errorf("workbench a refuses its own cookie")
	}
	if b.controls(req) {
		t.Errorf("workbench b accepts a's cookie")
	}
	if newRolesKey(a.key).cookie != a.cookie {
		t.Errorf("the cookie name of one key changes between servers")
	}
}
