package hugemem

import (
	"syscall"
	"unsafe"
)

// madvHugePage is MADV_HUGEPAGE of Linux's <asm-generic/mman-common.h>.
const madvHugePage = 14

// adviseHuge asks Linux to back the whole huge pages inside the n bytes
// at p with transparent huge pages (madvise(2), MADV_HUGEPAGE). It is
// advice: where huge pages are off ("never" in
// /sys/kernel/mm/transparent_hugepage/enabled) or none is free, the
// kernel uses small pages, and the error is ignored.
func adviseHuge(p unsafe.Pointer, n int) {
	start := uintptr(p)
	lo := int((start+hugePage-1)&^(hugePage-1) - start) // offsets of the first and past the last whole page
	hi := int((start+uintptr(n))&^(hugePage-1) - start)
	if hi <= lo {
		return
	}
	_ = syscall.Madvise(unsafe.Slice((*byte)(p), n)[lo:hi], madvHugePage)
}
