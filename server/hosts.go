package server

import (
	"fmt"
	"net"
	"net/http"
	"slices"
	"strings"
)

// The host allow-list is the defence against DNS rebinding: a page on a
// domain the attacker controls, re-pointed at 127.0.0.1, reaches the
// workbench from a visitor's browser as same-origin, but its requests
// still carry the attacker's name in Host. So every request, websocket
// upgrades included, must name the workbench by a name it was told to
// answer to: the loopback names, the address it is bound to, and the
// names given with --host. The port is not checked: a port mapping
// (docker run -p 9000:8080) changes it, and the name alone is what a
// rebinding page cannot choose.

// loopbackHosts are the names every workbench answers to.
var loopbackHosts = []string{"localhost", "127.0.0.1", "::1"}

// checkHostName validates one --host value: a bare host name or address.
func checkHostName(h string) error {
	bad := h == "" || strings.ContainsAny(h, "/ \t\r\n:@?#") && net.ParseIP(h) == nil
	if bad {
		return fmt.Errorf("host = %q: want a host name or address such as lab-pc or 192.168.1.20, without scheme or port", h)
	}
	return nil
}

// allowedHosts is the allow-list for a server bound to addr with the
// extra names given.
func allowedHosts(addr string, extra []string) ([]string, error) {
	hosts := slices.Clone(loopbackHosts)
	if h, _, err := net.SplitHostPort(addr); err == nil && h != "" {
		if ip := net.ParseIP(h); ip == nil || !ip.IsUnspecified() {
			// Bound to one address or name beyond loopback: that is how
			// the machine is reached. Bound to all interfaces (0.0.0.0,
			// as in a container), loopback is what a browser on the
			// same machine uses; other names must be given.
			hosts = append(hosts, strings.ToLower(h))
		}
	}
	for _, h := range extra {
		h = strings.TrimSuffix(strings.TrimPrefix(h, "["), "]")
		if err := checkHostName(h); err != nil {
			return nil, err
		}
		hosts = append(hosts, strings.ToLower(h))
	}
	slices.Sort(hosts)
	return slices.Compact(hosts), nil
}

// hostName is the name in a Host header, without port or brackets.
func hostName(host string) string {
	if h, _, err := net.SplitHostPort(host); err == nil {
		host = h
	}
	host = strings.TrimSuffix(strings.TrimPrefix(host, "["), "]")
	return strings.TrimSuffix(strings.ToLower(host), ".")
}

// checkHost refuses, with 421 Misdirected Request, a request whose Host is
// not on the allow-list.
func (s *Server) checkHost(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, req *http.Request) {
		if !slices.Contains(s.hosts, hostName(req.Host)) {
			shown := make([]string, len(s.hosts))
			for i, h := range s.hosts {
				if strings.Contains(h, ":") {
					h = "[" + h + "]"
				}
				shown[i] = h
			}
			http.Error(w, fmt.Sprintf("host %q: this workbench answers only to %s; to reach it by another name, start it with --host NAME (gyrebench serve --host %s)",
				req.Host, strings.Join(shown, ", "), hostName(req.Host)), http.StatusMisdirectedRequest)
			return
		}
		next.ServeHTTP(w, req)
	})
}
