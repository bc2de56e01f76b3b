package server

import (
	"context"
	"net/http"
	"time"

	"github.com/coder/websocket"
	"github.com/go-chi/chi/v5"
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

// serveWS connects a websocket client to a run: a reader goroutine (this
// one) turns messages into commands, a writer goroutine drains the
// subscriber.
func (s *Server) serveWS(w http.ResponseWriter, req *http.Request) {
	run := s.Run(chi.URLParam(req, "id"))
	if run == nil {
		http.Error(w, "no run "+chi.URLParam(req, "id"), http.StatusNotFound)
		return
	}
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

	sub := newSubscriber()
	if !run.submit(ctx, command{kind: cmdJoin, sub: sub}) {
		c.Close(websocket.StatusGoingAway, "the run has stopped")
		return
	}
	wrote := make(chan struct{})
	go func() {
		defer close(wrote)
		defer cancel()
		writeLoop(ctx, c, sub, s.opt.WriteTimeout)
	}()
	readLoop(ctx, c, run, sub)
	cancel()
	<-wrote
	// Leaving must reach the run even though ctx has ended; submit gives
	// up only when the run itself has stopped.
	run.submit(context.Background(), command{kind: cmdLeave, sub: sub})
	if s.ctx.Err() != nil {
		c.Close(websocket.StatusGoingAway, "the workbench is shutting down")
		return
	}
	c.Close(websocket.StatusNormalClosure, "")
}

func readLoop(ctx context.Context, c *websocket.Conn, run *Run, sub *subscriber) {
	for {
		typ, data, err := c.Read(ctx)
		if err != nil {
			return
		}
		if typ != websocket.MessageText {
			sub.send(outMsg{typ: textMsg, data: mustJSON(errorMsg{Type: "error", Field: "message", Value: "(binary)",
				Message: "binary messages are not commands; send JSON text such as {\"cmd\": \"play\"}"})})
			continue
		}
		m, ce := parseClient(data)
		if ce != nil {
			sub.send(errorReply(m, ce))
			continue
		}
		if !run.submit(ctx, command{kind: cmdClient, sub: sub, msg: m}) {
			return
		}
	}
}

func writeLoop(ctx context.Context, c *websocket.Conn, sub *subscriber, timeout time.Duration) {
	var msgs []outMsg
	var buf []byte
	for {
		select {
		case <-ctx.Done():
			return
		case <-sub.wake:
		}
		var f *frame
		var skipped uint32
		var overflow bool
		msgs, f, skipped, overflow = sub.take(msgs)
		if overflow {
			if f != nil {
				f.release()
			}
			c.Close(websocket.StatusPolicyViolation, "client too slow: it stopped reading messages; reload the page to reconnect")
			return
		}
		for i, m := range msgs {
			if err := write(ctx, c, m.typ, m.data, timeout); err != nil {
				if f != nil {
					f.release()
				}
				return
			}
			msgs[i] = outMsg{} // let the shared data go
		}
		if f != nil {
			buf = patchSkipped(buf, f.buf, skipped)
			f.release()
			if err := write(ctx, c, binMsg, buf, timeout); err != nil {
				return
			}
		}
	}
}

func write(ctx context.Context, c *websocket.Conn, typ websocket.MessageType, data []byte, timeout time.Duration) error {
	ctx, cancel := context.WithTimeout(ctx, timeout)
	defer cancel()
	return c.Write(ctx, typ, data)
}
