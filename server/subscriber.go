package server

import (
	"encoding/binary"
	"sync"
	"sync/atomic"

	"github.com/coder/websocket"
)

// maxQueued bounds a subscriber's queue of control messages. A client
// that lets this many pile up has stopped reading; it is disconnected
// rather than allowed to hold memory without bound. Frames never queue.
const maxQueued = 2048

// outMsg is one control message; data is shared between subscribers and
// must not be modified.
type outMsg struct {
	typ  websocket.MessageType
	data []byte
}

// frame is an encoded field frame shared by every subscriber it is
// offered to. It returns to its pool when the last holder releases it.
type frame struct {
	buf  []byte
	refs atomic.Int32
	pool chan *frame
}

func (f *frame) retain() { f.refs.Add(1) }

func (f *frame) release() {
	if f.refs.Add(-1) == 0 {
		select {
		case f.pool <- f:
		default:
		}
	}
}

// subscriber is one websocket client of a run: an ordered queue of control
// messages and a latest-wins slot for frames. The run offers; the client's
// writer goroutine takes. Neither waits for the other.
type subscriber struct {
	mu       sync.Mutex
	queue    []outMsg
	frame    *frame
	skipped  uint32 // frames replaced in the slot since the last one taken
	overflow bool
	wake     chan struct{} // capacity 1, shared by a client's subscriptions
}

func (s *subscriber) signal() {
	select {
	case s.wake <- struct{}{}:
	default:
	}
}

// send queues a control message.
func (s *subscriber) send(m outMsg) {
	s.mu.Lock()
	if len(s.queue) >= maxQueued {
		s.overflow = true
	} else {
		s.queue = append(s.queue, m)
	}
	s.mu.Unlock()
	s.signal()
}

// offer puts f in the frame slot, replacing (and counting as skipped) a
// frame the client has not taken yet; it reports whether it replaced one.
func (s *subscriber) offer(f *frame) bool {
	f.retain()
	s.mu.Lock()
	old := s.frame
	s.frame = f
	if old != nil {
		s.skipped++
	}
	s.mu.Unlock()
	if old != nil {
		old.release()
	}
	s.signal()
	return old != nil
}

// take returns the queued messages (in order), the pending frame with the
// count of frames skipped before it, and whether the queue overflowed.
// The caller must release the frame. buf is reused for the returned slice.
func (s *subscriber) take(buf []outMsg) (msgs []outMsg, f *frame, skipped uint32, overflow bool) {
	s.mu.Lock()
	msgs = append(buf[:0], s.queue...)
	clear(s.queue)
	s.queue = s.queue[:0]
	f, s.frame = s.frame, nil
	if f != nil {
		skipped, s.skipped = s.skipped, 0
	}
	overflow = s.overflow
	s.mu.Unlock()
	return msgs, f, skipped, overflow
}

// drop releases a pending frame of a subscriber that has gone.
func (s *subscriber) drop() {
	s.mu.Lock()
	f := s.frame
	s.frame = nil
	s.queue = nil
	s.mu.Unlock()
	if f != nil {
		f.release()
	}
}

// patchSkipped copies a shared frame into dst with this subscriber's
// skipped count in the header.
func patchSkipped(dst, src []byte, skipped uint32) []byte {
	dst = append(dst[:0], src...)
	binary.LittleEndian.PutUint32(dst[8:], skipped)
	return dst
}
