//go:build linux

package server

import (
	"runtime"
	"syscall"
)

// lowPriority gives the calling goroutine's thread the lowest CPU priority
// (nice 19), so that background analysis takes only the time the run, its
// watchers and the browser leave idle. The goroutine stays locked to the
// thread and never unlocks it: when it returns the runtime ends the thread
// rather than reuse it for other goroutines at low priority.
func lowPriority() {
	runtime.LockOSThread()
	_ = syscall.Setpriority(syscall.PRIO_PROCESS, syscall.Gettid(), 19) // best effort
}
