package buffer

import (
	"sync"
	"testing"
)

// same reports whether a and b share their first element's memory.
func same(a, b []float64) bool {
	return cap(a) > 0 && cap(b) > 0 && &a[:1][0] == &b[:1][0]
}

// TestPoolLends checks which kept slice a request gets, table-driven: the
// smallest that fits within the slack, none that is too small or too large.
func TestPoolLends(t *testing.T) {
	for _, tc := range []struct {
		name string
		kept []int // capacities handed back, in order
		want int   // request
		lent int   // index in kept of the slice lent, −1 for a new one
	}{
		{"same size", []int{1000}, 1000, 0},
		{"smaller request within slack", []int{1000}, 900, 0},
		{"request beyond slack", []int{1000}, 800, -1},
		{"larger request", []int{1000}, 1001, -1},
		{"smallest that fits", []int{1100, 1010, 1050}, 1000, 1},
		{"empty pool", nil, 10, -1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := NewPool(4)
			var kept [][]float64
			for _, c := range tc.kept {
				b := make([]float64, c)
				kept = append(kept, b)
				p.Put(b)
			}
			got := p.Get(tc.want)
			if len(got) != tc.want {
				t.Fatalf("length %d, want %d", len(got), tc.want)
			}
			for i, b := range kept {
				if same(got, b) != (i == tc.lent) {
					t.Errorf("lent kept slice %d: %v, want %v", i, same(got, b), i == tc.lent)
				}
			}
		})
	}
}

// TestPoolLetsGo checks the pool's limits: at most keep slices (the
// smallest goes), and a miss drops the slices too large for the request.
func TestPoolLetsGo(t *testing.T) {
	p := NewPool(2)
	p.Put(make([]float64, 100))
	p.Put(make([]float64, 300))
	p.Put(make([]float64, 200))
	if n, bytes := p.Held(); n != 2 || bytes != 8*500 {
		t.Fatalf("held %d slices of %d bytes, want 2 of %d (the smallest let go)", n, bytes, 8*500)
	}
	// 50 fits neither (too large for it): both go, a new slice comes.
	if b := p.Get(50); len(b) != 50 || cap(b) < 50 {
		t.Fatalf("got length %d capacity %d", len(b), cap(b))
	}
	if n, _ := p.Held(); n != 0 {
		t.Errorf("after a miss by a smaller request the pool holds %d slices, want 0", n)
	}
	// A miss by a larger request keeps the smaller slices.
	p.Put(make([]float64, 100))
	p.Get(1000)
	if n, _ := p.Held(); n != 1 {
		t.Errorf("after a miss by a larger request the pool holds %d slices, want 1", n)
	}
}

// TestPoolNil checks that a nil pool allocates and keeps nothing.
func TestPoolNil(t *testing.T) {
	var p *Pool
	b := p.Get(7)
	if len(b) != 7 {
		t.Fatalf("length %d", len(b))
	}
	for _, x := range b {
		if x != 0 {
			t.Fatal("a new slice from a nil pool is not zeroed")
		}
	}
	p.Put(b)
	if n, _ := p.Held(); n != 0 {
		t.Errorf("nil pool holds %d", n)
	}
	if p.Get(0) != nil {
		t.Error("Get(0) is not nil")
	}
}

// TestPoolConcurrent lends and returns from several goroutines (run with
// -race): no slice is lent twice at once.
func TestPoolConcurrent(t *testing.T) {
	p := NewPool(3)
	var wg sync.WaitGroup
	for g := 0; g < 4; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			for i := 0; i < 200; i++ {
				b := p.Get(1000)
				for k := range b {
					b[k] = float64(g)
				}
				for k := range b {
					if b[k] != float64(g) {
						t.Errorf("slice shared between goroutines")
						return
					}
				}
				p.Put(b)
			}
		}(g)
	}
	wg.Wait()
}
