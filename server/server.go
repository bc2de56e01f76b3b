package server

import (
	"context"
	"crypto/sha256"
	"encoding/base64"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"net"
	"net/http"
	"os"
	"path"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/figure"
	"gyrebench/sim/scenario"
	"gyrebench/sim/session"
	"gyrebench/static"
)

// Options configure the workbench.
type Options struct {
	Addr     string // listen address; "" = 127.0.0.1:8080
	Workers  int    // goroutines per run for the engine's loops; ≤ 0 = by mesh size (sim.AutoWorkers)
	RingSize int    // recent states kept per run; ≤ 0 = DefaultRingSize
	// MaxFPS is the most field frames per second a run sends its
	// watchers, 1 to MaxFPSLimit; 0 = DefaultMaxFPS.
	MaxFPS int
	// Scenario opens the first run: a built-in name or a scenario file;
	// "" = scenarios.Default.
	Scenario string
	Stderr   io.Writer // where the URL and warnings go; nil = discard
	// SweepDir holds the sweeps started from the workbench, one new
	// folder each; "" = gyrebench/sweeps under os.UserCacheDir(). It is
	// created when the first sweep starts.
	SweepDir string
	// Hosts are names the workbench answers to besides loopback and the
	// address it is bound to, such as the machine's LAN name (serve
	// --host); a request naming any other host is refused (hosts.go).
	Hosts []string
	// WriteTimeout bounds one websocket write: a client that has not
	// accepted a message within it is disconnected; 0 =
	// DefaultWriteTimeout.
	WriteTimeout time.Duration
	// MaxRuns bounds the live runs and pairs together (a pair counts
	// once); 0 = DefaultMaxRuns.
	MaxRuns int
	// Share turns on presenter and viewers (roles.go): only a client
	// holding the control key may change anything. It is implied by
	// ControlKey and by an address beyond loopback.
	Share bool
	// ControlKey is the key of the control URL, at least MinControlKey
	// characters; "" = a random one (crypto/rand).
	ControlKey string
	// AnalysisAtNormalPriority runs the linear analysis and the structure
	// report at the run's own CPU priority instead of the lowest (nice
	// 19). At nice 19 they take only the time other work leaves idle,
	// which is what a workbench wants beside its runs, but on a machine
	// kept busy by other programs they may wait for minutes; tests, which
	// wait for their results beside other CPU-bound work, set it.
	AnalysisAtNormalPriority bool
}

// DefaultAddr is where Serve listens when Options.Addr is empty.
const DefaultAddr = "127.0.0.1:8080"

// DefaultMaxRuns is the most live runs and pairs a server holds when
// Options.MaxRuns is 0; MaxRunsLimit bounds Options.MaxRuns.
const (
	DefaultMaxRuns = 16
	MaxRunsLimit   = 256
)

// HTTP timeouts. Websocket connections are hijacked, which clears the
// connection deadlines these set, so they apply to pages and files only;
// a websocket write has its own timeout (Options.WriteTimeout).
const (
	readHeaderTimeout = 5 * time.Second
	readTimeout       = 30 * time.Second
	writeTimeout      = 30 * time.Second
	idleTimeout       = 120 * time.Second
	shutdownTimeout   = 5 * time.Second
	sendBuffer        = 256 << 10 // bytes of socket send buffer per connection
)

// Server is the workbench as an http.Handler: pages, static files, the
// run registry and the websocket endpoints. Close stops its runs.
type Server struct {
	opt    Options
	ctx    context.Context
	cancel context.CancelFunc
	mux    chi.Router
	files  map[string]staticFile
	hosts  []string // the Host names it answers to (hosts.go)
	roles  *roles   // nil: not shared, every client controls (roles.go)

	runs registry[*Run]

	mu     sync.Mutex
	closed bool
	live   int // runs and pairs held, against Options.MaxRuns
	conns  sync.WaitGroup
}

type staticFile struct {
	data  []byte
	etag  string
	ctype string
}

// runLimits are the settings every run is built with.
func (s *Server) runLimits() runLimits {
	return runLimits{session: session.Options{Workers: s.opt.Workers, RingSize: s.opt.RingSize}, frameEvery: time.Second / time.Duration(s.opt.MaxFPS), analysisNormal: s.opt.AnalysisAtNormalPriority}
}

// New builds the workbench and its first run. It does not listen; use it
// as an http.Handler (tests do), or call Serve.
func New(opt Options) (*Server, error) {
	if opt.RingSize <= 0 {
		opt.RingSize = DefaultRingSize
	}
	if opt.RingSize > MaxRingSize {
		return nil, fmt.Errorf("ring = %d: allowed 1 to %d recent states per run (each holds a whole state)", opt.RingSize, MaxRingSize)
	}
	if opt.MaxFPS < 0 || opt.MaxFPS > MaxFPSLimit {
		return nil, fmt.Errorf("fps = %d: allowed 1 to %d field frames per second (0: the default, %d)", opt.MaxFPS, MaxFPSLimit, DefaultMaxFPS)
	}
	if opt.MaxFPS == 0 {
		opt.MaxFPS = DefaultMaxFPS
	}
	if opt.MaxRuns < 0 || opt.MaxRuns > MaxRunsLimit {
		return nil, fmt.Errorf("max-runs = %d: allowed 1 to %d live runs and pairs (0: the default, %d)", opt.MaxRuns, MaxRunsLimit, DefaultMaxRuns)
	}
	if opt.MaxRuns == 0 {
		opt.MaxRuns = DefaultMaxRuns
	}
	if opt.WriteTimeout < 0 {
		return nil, fmt.Errorf("write timeout = %v: must be positive (0: the default, %v)", opt.WriteTimeout, DefaultWriteTimeout)
	}
	if opt.WriteTimeout == 0 {
		opt.WriteTimeout = DefaultWriteTimeout
	}
	hosts, err := allowedHosts(opt.Addr, opt.Hosts)
	if err != nil {
		return nil, err
	}
	ro, err := newRoles(opt)
	if err != nil {
		return nil, err
	}
	if opt.Stderr == nil {
		opt.Stderr = io.Discard
	}
	name := opt.Scenario
	if name == "" {
		name = scenarios.Default
	}
	label, cfg, err := loadScenario(name)
	if err != nil {
		return nil, err
	}
	files, err := loadStatic()
	if err != nil {
		return nil, err
	}
	ctx, cancel := context.WithCancel(context.Background())
	s := &Server{opt: opt, ctx: ctx, cancel: cancel, files: files, hosts: hosts, roles: ro}
	if _, err := s.startRun(label, cfg); err != nil {
		cancel()
		return nil, err
	}
	s.mux = s.routes()
	return s, nil
}

// loadScenario reads a built-in scenario or a scenario file and validates
// it. The label is the built-in name or the file's base name.
func loadScenario(name string) (string, sim.Config, error) {
	src, err := scenarios.Source(name)
	label := name
	if err != nil {
		data, ferr := os.ReadFile(name)
		if ferr != nil {
			return "", sim.Config{}, fmt.Errorf("scenario %q: neither a built-in (%s) nor a readable file: %v",
				name, strings.Join(scenarios.Names(), ", "), ferr)
		}
		src, label = data, strings.TrimSuffix(path.Base(name), ".toml")
	}
	sc, err := scenario.Parse(src, name)
	if err != nil {
		return "", sim.Config{}, err
	}
	if err := sc.Config.Validate(); err != nil {
		return "", sim.Config{}, fmt.Errorf("scenario %s: %w", name, err)
	}
	return label, sc.Config, nil
}

func loadStatic() (map[string]staticFile, error) {
	files := map[string]staticFile{}
	err := fs.WalkDir(static.Files, ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := fs.ReadFile(static.Files, p)
		if err != nil {
			return err
		}
		sum := sha256.Sum256(data)
		ctype := "application/octet-stream"
		switch path.Ext(p) {
		case ".js":
			ctype = "text/javascript; charset=utf-8"
		case ".css":
			ctype = "text/css; charset=utf-8"
		case ".svg":
			ctype = "image/svg+xml"
		}
		files[p] = staticFile{data: data, etag: `"` + base64.RawURLEncoding.EncodeToString(sum[:12]) + `"`, ctype: ctype}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("reading embedded static files: %w", err)
	}
	// The canvas's colour maps are the figures' own (one definition).
	cm := figure.ColourMapsModule()
	sum := sha256.Sum256(cm)
	files["colourmaps.js"] = staticFile{data: cm, etag: `"` + base64.RawURLEncoding.EncodeToString(sum[:12]) + `"`, ctype: "text/javascript; charset=utf-8"}
	return files, nil
}

// startRun registers a new run of the given scenario.
func (s *Server) startRun(label string, cfg sim.Config) (*Run, error) {
	if err := s.reserve("runs"); err != nil {
		return nil, err
	}
	id := s.runs.newID()
	r, err := newRun(s.ctx, id, label, cfg, s.runLimits())
	if err != nil {
		s.unreserve()
		return nil, err
	}
	s.runs.put(id, r)
	return r, nil
}

// reserve counts one more live run or pair against Options.MaxRuns, or
// refuses; what names the kind for the message.
func (s *Server) reserve(what string) error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closed {
		return errors.New("the workbench is shutting down")
	}
	if s.live >= s.opt.MaxRuns {
		return fullError{fmt.Sprintf("%s: %d runs and pairs are open, the most this workbench holds (serve --max-runs %d); reuse one of them, or start the workbench with a larger --max-runs", what, s.live, s.opt.MaxRuns)}
	}
	s.live++
	return nil
}

// fullError is the refusal of a run or pair beyond Options.MaxRuns.
type fullError struct{ msg string }

func (e fullError) Error() string { return e.msg }

// startStatus is the HTTP status for an error starting a run or pair:
// 429 when the workbench is full, 400 for anything else.
func startStatus(err error) int {
	var full fullError
	if errors.As(err, &full) {
		return http.StatusTooManyRequests
	}
	return http.StatusBadRequest
}

// unreserve gives back a reservation whose run or pair failed to start.
func (s *Server) unreserve() {
	s.mu.Lock()
	s.live--
	s.mu.Unlock()
}

// Run returns the run with the given id, or nil.
func (s *Server) Run(id string) *Run {
	r, _ := s.runs.get(id)
	return r
}

// Runs returns the runs, oldest first.
func (s *Server) Runs() []*Run { return s.runs.list() }

// ServeHTTP serves the workbench.
func (s *Server) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	h := w.Header()
	h.Set("Content-Security-Policy", "default-src 'self'; img-src 'self' data:; frame-ancestors 'none'; base-uri 'none'; form-action 'self'")
	h.Set("X-Content-Type-Options", "nosniff")
	h.Set("Referrer-Policy", "no-referrer")
	s.mux.ServeHTTP(w, r)
}

// ControlURL is the control URL of a shared workbench whose watch URL is
// base (such as "http://127.0.0.1:8080/"), or "" when it is not shared.
func (s *Server) ControlURL(base string) string {
	if s.roles == nil {
		return ""
	}
	return s.roles.controlURL(base)
}

// Close stops every run and websocket connection and waits for them.
func (s *Server) Close() {
	s.mu.Lock()
	s.closed = true
	s.mu.Unlock()
	s.cancel()
	s.conns.Wait()
	for _, r := range s.Runs() {
		<-r.Done()
	}
}

// Serve listens on opt.Addr, prints the URL to opt.Stderr and serves the
// workbench until ctx ends, then shuts down gracefully.
func Serve(ctx context.Context, opt Options) error {
	if opt.Addr == "" {
		opt.Addr = DefaultAddr
	}
	if opt.Stderr == nil {
		opt.Stderr = io.Discard
	}
	host, _, err := net.SplitHostPort(opt.Addr)
	if err != nil {
		return fmt.Errorf("--addr %q: want host:port, e.g. %s", opt.Addr, DefaultAddr)
	}
	s, err := New(opt)
	if err != nil {
		return err
	}
	defer s.Close()
	ln, err := net.Listen("tcp", opt.Addr)
	if err != nil {
		return fmt.Errorf("--addr %q: %w", opt.Addr, err)
	}
	if !isLoopback(host) {
		fmt.Fprintf(opt.Stderr, "warning: listening on %s, which is reachable from the network: anyone who can reach it can watch; only the control URL drives the runs\n", ln.Addr())
	}
	if s.roles == nil {
		fmt.Fprintf(opt.Stderr, "gyrebench workbench: %s\n", browseURL(ln.Addr()))
	} else {
		fmt.Fprintf(opt.Stderr, "gyrebench workbench, shared\n  watch:   %s\n  control: %s  (keep this one to yourself)\n", browseURL(ln.Addr()), s.roles.controlURL(browseURL(ln.Addr())))
	}
	hs := s.HTTPServer()
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		return fmt.Errorf("serving on %s: %w", ln.Addr(), err)
	case <-ctx.Done():
	}
	fmt.Fprintln(opt.Stderr, "gyrebench workbench: shutting down")
	// Websockets are hijacked, so Shutdown does not wait for them: close
	// them (and the runs) first, then let ordinary requests finish.
	s.Close()
	sctx, cancel := context.WithTimeout(context.Background(), shutdownTimeout)
	defer cancel()
	if err := hs.Shutdown(sctx); err != nil {
		return fmt.Errorf("shutting down: %w", err)
	}
	return nil
}

// HTTPServer returns an http.Server for the workbench with its timeouts
// and socket settings; Serve uses it, and tests can run it on their own
// listener (httptest.NewUnstartedServer, then replace Config).
func (s *Server) HTTPServer() *http.Server {
	return &http.Server{
		Handler:           s,
		ReadHeaderTimeout: readHeaderTimeout,
		ReadTimeout:       readTimeout,
		WriteTimeout:      writeTimeout,
		IdleTimeout:       idleTimeout,
		ConnContext: func(ctx context.Context, c net.Conn) context.Context {
			// A small send buffer keeps latest-wins honest: a client that
			// stops reading blocks the writer after a few frames, so its
			// later frames are skipped rather than queued seconds deep in
			// the kernel. Loopback and LAN throughput stay far above what
			// the frames need.
			if tc, ok := c.(*net.TCPConn); ok {
				_ = tc.SetWriteBuffer(sendBuffer)
			}
			return ctx
		},
	}
}

// isLoopback reports whether host names only this machine.
func isLoopback(host string) bool {
	if strings.EqualFold(host, "localhost") {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// browseURL is the URL to open for a listener; an unspecified address
// (all interfaces) is opened through loopback.
func browseURL(a net.Addr) string {
	ta, ok := a.(*net.TCPAddr)
	if !ok {
		return "http://" + a.String() + "/"
	}
	ip := ta.IP
	if ip == nil || ip.IsUnspecified() {
		ip = net.IPv4(127, 0, 0, 1)
	}
	return "http://" + net.JoinHostPort(ip.String(), strconv.Itoa(ta.Port)) + "/"
}
