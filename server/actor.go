package server

import "context"

// An actor is the goroutine that owns one run's or one pair's sessions:
// everything reaches them as a closure on one channel, so nothing in
// them is shared and nothing needs a lock. While its host runs, the actor
// advances it between closures.
type actor struct {
	cmds chan func()
	done chan struct{}
}

// host is what an actor drives: a run (one session) or a pair (two).
type host interface {
	running() bool // advance until false
	advance()      // one step
	close()        // the actor is ending: release the models
	// The websocket hub's calls, on the actor's goroutine.
	join(c *client)
	leave(c *client)
	command(c *client, m wireMsg)
}

func newActor() *actor { return &actor{cmds: make(chan func(), 64), done: make(chan struct{})} }

// loop runs h until ctx ends.
func (a *actor) loop(ctx context.Context, h host) {
	defer close(a.done)
	defer h.close()
	for {
		if h.running() {
			select {
			case fn := <-a.cmds:
				fn()
			case <-ctx.Done():
				return
			default:
				h.advance()
			}
			continue
		}
		select {
		case fn := <-a.cmds:
			fn()
		case <-ctx.Done():
			return
		}
	}
}

// Done is closed when the actor's goroutine has stopped.
func (a *actor) Done() <-chan struct{} { return a.done }

// submit hands fn to the actor; it reports false when the actor has
// stopped or ctx ended first.
func (a *actor) submit(ctx context.Context, fn func()) bool {
	select {
	case a.cmds <- fn:
		return true
	case <-a.done:
		return false
	case <-ctx.Done():
		return false
	}
}

// await runs fn on the actor's goroutine and waits for it; it reports
// false when the actor stopped or ctx ended first (fn may then still run
// later).
func (a *actor) await(ctx context.Context, fn func()) bool {
	ran := make(chan struct{})
	if !a.submit(ctx, func() { fn(); close(ran) }) {
		return false
	}
	select {
	case <-ran:
		return true
	case <-a.done:
		return false
	case <-ctx.Done():
		return false
	}
}
