//go:build libxc

package libxcref

import "testing"

func TestProbe(t *testing.T) {
	for _, id := range []int{1, 7, 8, 12, 13, 106, 131, 101, 130, 402, 475, 406} {
		for _, pol := range []bool{false, true} {
			f, err := New(id, pol)
			if err != nil {
				t.Fatal(err)
			}
			t.Logf("%d pol=%v gga=%v thr=%+v exx=%v", id, pol, f.IsGGA(), f.Thresholds(), f.ExactExchange())
			for _, c := range f.Components() {
				t.Logf("   comp %+v", c)
			}
			f.Close()
		}
	}
}
