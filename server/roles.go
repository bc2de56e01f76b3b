package server

import (
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base64"
	"encoding/hex"
	"fmt"
	"net"
	"net/http"
	"net/url"
	"strings"

	"gyrebench/web"
)

// Presenter and viewers. When the workbench is shared (Options.Share, or
// an address beyond loopback) it holds a control key: whoever opens the
// control URL (any page with ?control=KEY) gets the key as an HttpOnly,
// SameSite=Strict cookie and is sent back to the page without the key in
// the address. Only a request carrying that cookie may change anything:
// every HTTP method but GET and HEAD is refused (403), and so is every
// websocket command but the read-only ones (readOnlyCommands). Everyone
// else watches: frames, plots, markers and panels reach them as they
// reach the presenter. A shared workbench tells each websocket client its
// role in a role message, sent before hello.

const (
	controlParam    = "control"            // the control URL's query key
	controlCookie   = "gyrebench-control-" // + a digest of the key: holds the key once visited
	controlKeyBytes = 24                   // random bytes of a generated key (192 bits)
	// MinControlKey is the fewest characters a given control key may have.
	MinControlKey = 16
)

// WatchHint is what a viewer is told when it tries to change something.
const WatchHint = "this page is watching: open the control URL printed by `gyrebench serve` to drive the workbench"

// readOnly reports whether a viewer may send websocket command cmd: each
// such command turns on a panel that only computes what the page shows
// (from the run's choices, changing nothing), and the page sends them on
// connecting. set-field is not one of them: the field shown is the run's,
// for every watcher.
func readOnly(cmd string) bool { return cmd == "linear" || cmd == "structure" }

// roles is a shared workbench's control key; a nil *roles is a workbench
// that is not shared, where every client controls.
type roles struct {
	key string
	// cookie is the cookie's name. Browsers keep cookies apart by host,
	// not by port, so two shared workbenches on one machine would
	// overwrite each other's cookie under one name; a digest of the key
	// keeps them apart (a given key shared by both controls both anyway).
	cookie string
}

func newRolesKey(key string) *roles {
	d := sha256.Sum256([]byte(key))
	return &roles{key: key, cookie: controlCookie + hex.EncodeToString(d[:6])}
}

// CheckControlKey validates a given control key (serve --control-key).
func CheckControlKey(key string) error {
	if len(key) < MinControlKey {
		return fmt.Errorf("--control-key: %d characters given; the key must have at least %d (leave the flag out for a random one)", len(key), MinControlKey)
	}
	if strings.ContainsFunc(key, func(r rune) bool { return r <= ' ' || r > '~' || strings.ContainsRune(`";\,`, r) }) {
		return fmt.Errorf("--control-key: the key must be printable ASCII without spaces, quotes, commas, semicolons or backslashes (it travels in a cookie)")
	}
	return nil
}

// newRoles returns the roles of a workbench with options opt: nil when it
// is not shared, else the given key or a random one.
func newRoles(opt Options) (*roles, error) {
	host, _, _ := net.SplitHostPort(opt.Addr)
	share := opt.Share || opt.ControlKey != "" || host != "" && !isLoopback(host)
	if !share {
		return nil, nil
	}
	if opt.ControlKey != "" {
		if err := CheckControlKey(opt.ControlKey); err != nil {
			return nil, err
		}
		return newRolesKey(opt.ControlKey), nil
	}
	b := make([]byte, controlKeyBytes)
	if _, err := rand.Read(b); err != nil {
		return nil, fmt.Errorf("making the control key: %w", err)
	}
	return newRolesKey(base64.RawURLEncoding.EncodeToString(b)), nil
}

// controls reports whether req may change things: always on a workbench
// that is not shared, else when it carries the control cookie.
func (ro *roles) controls(req *http.Request) bool {
	if ro == nil {
		return true
	}
	c, err := req.Cookie(ro.cookie)
	return err == nil && ro.matches(c.Value)
}

// watch is what a server-rendered page tells req: nothing for a page
// that controls, the chip and WatchHint for a viewer's.
func (ro *roles) watch(req *http.Request) web.Watch {
	if ro.controls(req) {
		return web.Watch{}
	}
	return web.Watch{Watching: true, WatchHint: WatchHint}
}

func (ro *roles) matches(key string) bool {
	return subtle.ConstantTimeCompare([]byte(key), []byte(ro.key)) == 1
}

// controlURL is the control URL for the watch URL base.
func (ro *roles) controlURL(base string) string {
	return base + "?" + controlParam + "=" + url.QueryEscape(ro.key)
}

// check is the middleware of a shared workbench: it takes a visit to the
// control URL (the cookie, then a redirect without the key) and refuses
// every other method than GET and HEAD without the cookie.
func (ro *roles) check(next http.Handler) http.Handler {
	if ro == nil {
		return next
	}
	return http.HandlerFunc(func(w http.ResponseWriter, req *http.Request) {
		read := req.Method == http.MethodGet || req.Method == http.MethodHead
		if q := req.URL.Query(); read && q.Has(controlParam) {
			if !ro.matches(q.Get(controlParam)) {
				http.Error(w, "control key: not this workbench's key; open the control URL exactly as `gyrebench serve` printed it", http.StatusForbidden)
				return
			}
			http.SetCookie(w, &http.Cookie{Name: ro.cookie, Value: ro.key, Path: "/", HttpOnly: true, SameSite: http.SameSiteStrictMode, Secure: req.TLS != nil})
			q.Del(controlParam)
			// One leading slash: "//host/..." would leave the site.
			to := url.URL{Path: "/" + strings.TrimLeft(req.URL.Path, "/"), RawQuery: q.Encode()}
			http.Redirect(w, req, to.String(), http.StatusSeeOther)
			return
		}
		if !read && !ro.controls(req) {
			http.Error(w, WatchHint, http.StatusForbidden)
			return
		}
		next.ServeHTTP(w, req)
	})
}

// roleMsg tells a client of a shared workbench its role.
func roleMsg(control bool) outMsg {
	m := struct {
		Type string `json:"type"`
		Role string `json:"role"`
		Hint string `json:"hint,omitempty"`
	}{"role", "control", ""}
	if !control {
		m.Role, m.Hint = "watch", "The presenter drives this run; the control URL from `gyrebench serve` gives control."
	}
	return textOut(m)
}

// refusal is the answer to a command from a viewer, or nil when the
// command may go ahead.
func refusal(control bool, m wireMsg) *outMsg {
	if control || readOnly(m.Cmd) {
		return nil
	}
	r := errorReply(m, refuse("role", "watch", "%s", WatchHint))
	return &r
}
