package server

import (
	"encoding/json"
	"net/http"
	"strconv"
	"sync"
)

// registry holds a server's runs, pairs or sweeps by id, oldest first.
// It is safe for concurrent use.
type registry[T any] struct {
	mu    sync.Mutex
	byID  map[string]T
	order []string
	next  int
}

// newID returns a fresh id: 1, 2, 3, ...
func (g *registry[T]) newID() string {
	g.mu.Lock()
	defer g.mu.Unlock()
	g.next++
	return strconv.Itoa(g.next)
}

// put registers v under id.
func (g *registry[T]) put(id string, v T) {
	g.mu.Lock()
	defer g.mu.Unlock()
	g.putLocked(id, v)
}

func (g *registry[T]) putLocked(id string, v T) {
	if g.byID == nil {
		g.byID = map[string]T{}
	}
	g.byID[id] = v
	g.order = append(g.order, id)
}

// get returns the entry of id, and whether there is one.
func (g *registry[T]) get(id string) (T, bool) {
	g.mu.Lock()
	defer g.mu.Unlock()
	v, ok := g.byID[id]
	return v, ok
}

// list returns the entries, oldest first.
func (g *registry[T]) list() []T {
	g.mu.Lock()
	defer g.mu.Unlock()
	return g.listLocked()
}

func (g *registry[T]) listLocked() []T {
	out := make([]T, 0, len(g.order))
	for _, id := range g.order {
		out = append(out, g.byID[id])
	}
	return out
}

// remove forgets the entry of id.
func (g *registry[T]) remove(id string) {
	g.mu.Lock()
	defer g.mu.Unlock()
	g.removeLocked(id)
}

func (g *registry[T]) removeLocked(id string) {
	delete(g.byID, id)
	out := g.order[:0]
	for _, x := range g.order {
		if x != id {
			out = append(out, x)
		}
	}
	g.order = out
}

// infosOf returns the snapshots of the registry's entries, oldest first
// ([] when there are none).
func infosOf[T, I any](g *registry[T], info func(T) I) []I {
	infos := []I{}
	for _, v := range g.list() {
		infos = append(infos, info(v))
	}
	return infos
}

// serveInfos answers with the snapshots as a JSON list.
func serveInfos[T, I any](w http.ResponseWriter, g *registry[T], info func(T) I) {
	writeJSON(w, infosOf(g, info))
}

// writeJSON answers with v as JSON.
func writeJSON(w http.ResponseWriter, v any) {
	w.Header().Set("Content-Type", "application/json")
	_ = json.NewEncoder(w).Encode(v)
}
