//go:build !linux

package pgtest

import (
	"context"
	"errors"
	"sync"
)

// Server is one throw-away PostgreSQL cluster (started on Linux only).
type Server struct {
	Dir, Socket, PassFile string
	Port                  int

	adminPW string
	mu      sync.Mutex
}

var errNotHere = errors.New("throw-away PostgreSQL servers are started on Linux only")

// Start is not available here.
func Start(context.Context, ...string) (*Server, error) { return nil, errNotHere }

// Resume is not available here.
func (s *Server) Resume() error { return errNotHere }

// Halt is not available here.
func (s *Server) Halt() error { return errNotHere }

// Stop is not available here.
func (s *Server) Stop() error { return errNotHere }

// Log is empty here.
func (s *Server) Log() string { return "" }
