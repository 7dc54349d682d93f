package parse

import (
	"syscall"
	"unsafe"
)

// adviseHuge asks Linux to back the whole 2 MiB pages inside s with transparent huge pages
// (madvise MADV_HUGEPAGE), for systems where THP is left to the program. Filling 100 MB of
// columns then takes a few dozen page faults instead of tens of thousands, which on a virtual
// machine is a good part of the load time. The advice is optional: errors are ignored.
func adviseHuge[T int64 | float64](s []T) {
	const huge = 2 << 20
	if cap(s) == 0 {
		return
	}
	base := unsafe.Pointer(unsafe.SliceData(s))
	size := uintptr(cap(s)) * unsafe.Sizeof(*(*T)(base))
	addr := uintptr(base)
	lo := (addr + huge - 1) &^ (huge - 1)
	hi := (addr + size) &^ (huge - 1)
	if hi <= lo {
		return
	}
	_ = syscall.Madvise(unsafe.Slice((*byte)(unsafe.Add(base, lo-addr)), hi-lo), madvHugepage)
}

// madvHugepage is MADV_HUGEPAGE from linux/mman.h.
const madvHugepage = 14
