//go:build !linux

package server

// lowPriority does nothing where thread priorities are not set: the
// background analysis then shares the CPU equally.
func lowPriority() {}
