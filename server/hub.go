package server

import (
	"context"
	"net/http"
	"time"

	"github.com/coder/websocket"
)

const (
	textMsg = websocket.MessageText
	binMsg  = websocket.MessageBinary

	// maxClientMsg bounds a command message; a bigger one closes the
	// connection (websocket status 1009).
	maxClientMsg = 1 << 16
	// DefaultWriteTimeout bounds one websocket write when
	// Options.WriteTimeout is 0; a client that takes longer to accept a
	// message is disconnected.
	DefaultWriteTimeout = 20 * time.Second
)

// The websocket hub. A client holds N tagged subscriptions, one per
// stream it watches: a run is N = 1 (untagged), a pair N = 3 (side A,
// side B and the pair's own messages). A tag wraps each text message as
// {"side": S, "msg": M} and sets byte 3 of each binary message.

// tag marks the messages of one subscription.
type tag struct {
	side string // the side of wrapped text messages
	wrap bool   // wrap text messages
	bin  byte   // byte 3 of binary messages; 0 leaves it
}

// client is one websocket connection's subscriptions; the last one
// carries the replies to its commands.
type client struct {
	subs []*subscriber
	wake chan struct{} // shared by the subscriptions: "something to take"
}

// newClient makes a client of n subscriptions.
func newClient(n int) *client {
	c := &client{subs: make([]*subscriber, n), wake: make(chan struct{}, 1)}
	for i := range c.subs {
		c.subs[i] = &subscriber{wake: c.wake}
	}
	return c
}

// own is the subscription that receives the client's replies.
func (c *client) own() *subscriber { return c.subs[len(c.subs)-1] }

// textOut encodes a text message.
func textOut(v any) outMsg { return outMsg{typ: textMsg, data: mustJSON(v)} }

// socket is what the hub connects a client to.
type socket struct {
	a     *actor
	h     host
	tags  []tag
	sided bool   // commands may name a side
	what  string // "run", "pair": for close messages
	// control: the client may send every command (roles.go); set by
	// serveSocket.
	control bool
}

// serveSocket connects a websocket client: a reader (this goroutine)
// turns messages into commands on the actor, a writer goroutine drains
// the client's subscriptions.
func (s *Server) serveSocket(w http.ResponseWriter, req *http.Request, so socket) {
	s.mu.Lock()
	if s.closed {
		s.mu.Unlock()
		http.Error(w, "the workbench is shutting down", http.StatusServiceUnavailable)
		return
	}
	s.conns.Add(1)
	s.mu.Unlock()
	defer s.conns.Done()

	// Accept checks that the page's origin is this host, so other sites
	// cannot drive a run from a visitor's browser.
	c, err := websocket.Accept(w, req, nil)
	if err != nil {
		return // Accept has answered the request
	}
	c.SetReadLimit(maxClientMsg)
	ctx, cancel := context.WithCancel(s.ctx)
	defer cancel()

	cl := newClient(len(so.tags))
	so.control = s.roles.controls(req)
	if s.roles != nil {
		cl.own().send(roleMsg(so.control))
	}
	if !so.a.submit(ctx, func() { so.h.join(cl) }) {
		c.Close(websocket.StatusGoingAway, "the "+so.what+" has stopped")
		return
	}
	wrote := make(chan struct{})
	go func() {
		defer close(wrote)
		defer cancel()
		writeLoop(ctx, c, cl, so.tags, s.opt.WriteTimeout)
	}()
	readLoop(ctx, c, so, cl)
	cancel()
	<-wrote
	// Leaving must reach the actor even though ctx has ended; submit
	// gives up only when the actor itself has stopped.
	so.a.submit(context.Background(), func() { so.h.leave(cl) })
	if s.ctx.Err() != nil {
		c.Close(websocket.StatusGoingAway, "the workbench is shutting down")
		return
	}
	c.Close(websocket.StatusNormalClosure, "")
}

func readLoop(ctx context.Context, c *websocket.Conn, so socket, cl *client) {
	for {
		typ, data, err := c.Read(ctx)
		if err != nil {
			return
		}
		if typ != websocket.MessageText {
			cl.own().send(textOut(errorMsg{Type: "error", Field: "message", Value: "(binary)",
				Message: "binary messages are not commands; send JSON text such as {\"cmd\": \"play\"}"}))
			continue
		}
		m, ce := parseMsg(data, so.sided)
		if ce != nil {
			cl.own().send(errorReply(m, ce))
			continue
		}
		if r := refusal(so.control, m); r != nil {
			cl.own().send(*r)
			continue
		}
		if !so.a.submit(ctx, func() { so.h.command(cl, m) }) {
			return
		}
	}
}

// writeLoop drains a client's subscriptions, tagging each message.
func writeLoop(ctx context.Context, c *websocket.Conn, cl *client, tags []tag, timeout time.Duration) {
	type taken struct {
		msgs     []outMsg
		f        *frame
		skipped  uint32
		overflow bool
	}
	got := make([]taken, len(cl.subs))
	release := func() {
		for i := range got {
			if got[i].f != nil {
				got[i].f.release()
				got[i].f = nil
			}
		}
	}
	var buf []byte
	for {
		select {
		case <-ctx.Done():
			release()
			return
		case <-cl.wake:
		}
		// The last subscription (the client's own) is taken first and
		// written last: the actor queues a side's messages (a new
		// config, geometry) before its own ack or A − B frame, so
		// whatever the snapshot of the own queue holds has its side
		// messages already queued, and the client sees them in order.
		for i := len(got) - 1; i >= 0; i-- {
			g := &got[i]
			g.msgs, g.f, g.skipped, g.overflow = cl.subs[i].take(g.msgs)
		}
		for i := range got {
			if got[i].overflow {
				release()
				c.Close(websocket.StatusPolicyViolation, "client too slow: it stopped reading messages; reload the page to reconnect")
				return
			}
		}
		for i := range got {
			g, t := &got[i], tags[i]
			for k, m := range g.msgs {
				data := m.data
				switch {
				case m.typ == textMsg && t.wrap:
					data = wrapSide(buf[:0], t.side, m.data)
					buf = data
				case m.typ == binMsg && t.bin != 0:
					data = append(buf[:0], m.data...)
					data[3] = t.bin
					buf = data
				}
				if err := write(ctx, c, m.typ, data, timeout); err != nil {
					release()
					return
				}
				g.msgs[k] = outMsg{} // let the shared data go
			}
			if g.f != nil {
				buf = patchSkipped(buf, g.f.buf, g.skipped)
				if t.bin != 0 {
					buf[3] = t.bin
				}
				g.f.release()
				g.f = nil
				if err := write(ctx, c, binMsg, buf, timeout); err != nil {
					release()
					return
				}
			}
		}
	}
}

// wrapSide writes {"side": side, "msg": data} into dst.
func wrapSide(dst []byte, side string, data []byte) []byte {
	dst = append(dst, `{"side":"`...)
	dst = append(dst, side...)
	dst = append(dst, `","msg":`...)
	dst = append(dst, data...)
	return append(dst, '}')
}

func write(ctx context.Context, c *websocket.Conn, typ websocket.MessageType, data []byte, timeout time.Duration) error {
	ctx, cancel := context.WithTimeout(ctx, timeout)
	defer cancel()
	return c.Write(ctx, typ, data)
}
