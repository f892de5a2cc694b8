package mailbox

import (
	"sync"
	"testing"
)

// Pushes from several goroutines are all taken, each goroutine's in the
// order it pushed them, and Push never waits for the taker.
func TestEverythingTakenInOrder(t *testing.T) {
	b := New[[2]int]()
	var wg sync.WaitGroup
	for g := range 4 {
		wg.Go(func() {
			for i := range 1000 {
				b.Push([2]int{g, i})
			}
		})
	}
	wg.Wait() // every push done, none taken yet
	<-b.Ready()
	got := b.Take(nil)
	if len(got) != 4000 {
		t.Fatalf("took %d of 4000 pushed", len(got))
	}
	next := [4]int{}
	for _, v := range got {
		if v[1] != next[v[0]] {
			t.Fatalf("goroutine %d: %d after %d", v[0], v[1], next[v[0]]-1)
		}
		next[v[0]]++
	}
	if len(b.Take(nil)) != 0 {
		t.Fatal("something taken twice")
	}
}
