package dft

import (
	"syscall"
	"unsafe"
)

// hugePageBytes is the size of a transparent huge page on amd64 and arm64
// Linux.
const hugePageBytes = 2 << 20

// adviseHugePages asks the kernel to back the whole 2 MiB pages inside s
// with transparent huge pages (madvise MADV_HUGEPAGE), which makes the
// first touch of a large store of function values several times cheaper
// than faulting it in 4 KiB at a time. It is advice only: any error (a
// kernel without transparent huge pages, a slice under one huge page) is
// ignored and changes nothing but speed.
func adviseHugePages(s []float64) {
	if len(s)*8 < 2*hugePageBytes {
		return
	}
	start := uintptr(unsafe.Pointer(&s[0]))
	end := start + uintptr(len(s))*8
	lo := (start + hugePageBytes - 1) &^ (hugePageBytes - 1)
	hi := end &^ (hugePageBytes - 1)
	if hi <= lo {
		return
	}
	b := unsafe.Slice((*byte)(unsafe.Add(unsafe.Pointer(&s[0]), lo-start)), hi-lo)
	_ = syscall.Madvise(b, syscall.MADV_HUGEPAGE)
}
