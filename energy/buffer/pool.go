package buffer

import (
	"sync"

	"poise/energy/internal/hugepage"
)

// Pool keeps up to a fixed number of slices handed back by finished
// calculations and lends them to later ones of about the same size. The
// zero value and a nil *Pool keep nothing (Get allocates, Put drops). It is
// safe for concurrent use.
type Pool struct {
	mu   sync.Mutex
	keep int
	free [][]float64
}

// NewPool returns a pool that keeps at most keep slices: the number of
// calculations that may run at once, so that the pool never holds more
// than they held themselves.
func NewPool(keep int) *Pool {
	return &Pool{keep: max(keep, 0)}
}

// Slack bounds the capacity of a lent slice: at most n + n/Slack for a
// request of n elements (grids and fits of neighbouring geometries differ
// by a few per cent at most; a much larger slice belongs to a larger
// calculation and would hold memory for nothing). New slices get n/headroom
// spare capacity, so that a slightly larger neighbour fits too.
const (
	Slack    = 8
	headroom = 32
)

// Get returns a slice of length n with unspecified contents: the smallest
// kept one whose capacity lies between n and n + n/Slack, or a new one,
// advised onto transparent huge pages (package hugepage: large arrays
// written once are faulted in several times faster).
// When none fits, the kept slices larger than that are let go (they
// belong to a larger calculation, such as a relaxation on all threads
// before a Hessian shares them).
func (p *Pool) Get(n int) []float64 {
	if n <= 0 {
		return nil
	}
	if p == nil {
		return fresh(n, n)
	}
	hi := n + n/Slack
	p.mu.Lock()
	best := -1
	for i, b := range p.free {
		if c := cap(b); c >= n && c <= hi && (best < 0 || c < cap(p.free[best])) {
			best = i
		}
	}
	if best >= 0 {
		b := p.free[best]
		p.free = append(p.free[:best], p.free[best+1:]...)
		p.mu.Unlock()
		return b[:n]
	}
	kept := p.free[:0]
	for _, b := range p.free {
		if cap(b) <= hi {
			kept = append(kept, b)
		}
	}
	clear(p.free[len(kept):])
	p.free = kept
	p.mu.Unlock()
	return fresh(n, n+n/headroom)
}

// fresh allocates a slice of length n and capacity c on huge pages.
func fresh(n, c int) []float64 {
	b := make([]float64, n, c)
	hugepage.Advise(b[:c])
	return b
}

// Put hands b back for a later Get; the caller must not use it again. When
// the pool then holds more than its limit, the smallest slice is let go.
func (p *Pool) Put(b []float64) {
	if p == nil || cap(b) == 0 {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.free = append(p.free, b[:0])
	if len(p.free) > p.keep {
		small := 0
		for i, x := range p.free {
			if cap(x) < cap(p.free[small]) {
				small = i
			}
		}
		p.free[small] = p.free[len(p.free)-1]
		p.free[len(p.free)-1] = nil
		p.free = p.free[:len(p.free)-1]
	}
}

// Held returns the number of slices the pool keeps and their total
// capacity in bytes.
func (p *Pool) Held() (slices int, bytes int64) {
	if p == nil {
		return 0, 0
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	for _, b := range p.free {
		bytes += 8 * int64(cap(b))
	}
	return len(p.free), bytes
}
