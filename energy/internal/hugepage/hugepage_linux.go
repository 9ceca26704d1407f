package hugepage

import (
	"syscall"
	"unsafe"
)

// pageBytes is the size of a transparent huge page on amd64 and arm64
// Linux.
const pageBytes = 2 << 20

// Advise asks the kernel to back the whole 2 MiB pages inside s with
// transparent huge pages (madvise MADV_HUGEPAGE). Any error (a kernel
// without transparent huge pages, a slice under two huge pages) is ignored.
func Advise(s []float64) {
	if len(s)*8 < 2*pageBytes {
		return
	}
	start := uintptr(unsafe.Pointer(&s[0]))
	end := start + uintptr(len(s))*8
	lo := (start + pageBytes - 1) &^ (pageBytes - 1)
	hi := end &^ (pageBytes - 1)
	if hi <= lo {
		return
	}
	b := unsafe.Slice((*byte)(unsafe.Add(unsafe.Pointer(&s[0]), lo-start)), hi-lo)
	_ = syscall.Madvise(b, syscall.MADV_HUGEPAGE)
}
