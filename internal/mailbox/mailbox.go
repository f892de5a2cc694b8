// Package mailbox is an unbounded hand-over between goroutines: Push never
// blocks, and the receiver takes everything pushed at once when Ready
// fires. The acquirer takes its reader's lines and its controls through
// mailboxes, the live session the operator's requests.
package mailbox

import "sync"

// Box holds what was pushed and not yet taken. The zero value is not
// ready for use: make one with New.
type Box[T any] struct {
	mu    sync.Mutex
	items []T
	ready chan struct{}
}

// New makes an empty mailbox.
func New[T any]() *Box[T] { return &Box[T]{ready: make(chan struct{}, 1)} }

// Push adds v; it never blocks.
func (b *Box[T]) Push(v T) {
	b.mu.Lock()
	b.items = append(b.items, v)
	b.mu.Unlock()
	select {
	case b.ready <- struct{}{}:
	default:
	}
}

// Ready fires after a Push; take what is there with Take.
func (b *Box[T]) Ready() <-chan struct{} { return b.ready }

// Take returns everything pushed since the last Take, in order, handing
// spare (emptied) in for reuse.
func (b *Box[T]) Take(spare []T) []T {
	clear(spare)
	b.mu.Lock()
	got := b.items
	b.items = spare[:0]
	b.mu.Unlock()
	return got
}
