package hugemem

import (
	"bufio"
	"fmt"
	"os"
	"strings"
	"testing"
	"unsafe"
)

// TestSliceHugePages: a Slice is n zeroed, writable elements, and
// where transparent huge pages are on for memory that asks ("madvise" or
// "always" in /sys/kernel/mm/transparent_hugepage/enabled; Linux's
// Documentation/admin-guide/mm/transhuge.rst), the mapping that holds it
// has huge pages once it is written (AnonHugePages in /proc/self/smaps,
// proc(5)). With them "never" the slice must still be usable.
func TestSliceHugePages(t *testing.T) {
	const n = 8 << 20 // 16 MiB of uint16: several whole huge pages
	s := Slice[uint16](n)
	if len(s) != n {
		t.Fatalf("len %d, want %d", len(s), n)
	}
	for i := 0; i < n; i += 512 {
		if s[i] != 0 {
			t.Fatalf("element %d is %d, want 0", i, s[i])
		}
		s[i] = uint16(i)
	}
	mode, err := os.ReadFile("/sys/kernel/mm/transparent_hugepage/enabled")
	if err != nil {
		t.Fatalf("reading the huge-page mode: %v", err)
	}
	start := uintptr(unsafe.Pointer(&s[0]))
	huge, err := anonHugeKB(start, start+2*n)
	if err != nil {
		t.Fatal(err)
	}
	on := !strings.Contains(string(mode), "[never]")
	t.Logf("mode %q: %d kB of huge pages in the slice's mapping", strings.TrimSpace(string(mode)), huge)
	if on && huge == 0 {
		t.Errorf("huge pages are on (%s) but none backs the written slice", strings.TrimSpace(string(mode)))
	}
}

// anonHugeKB returns the sum of AnonHugePages over the mappings of
// /proc/self/smaps that overlap the bytes [start, end). (The advice splits
// a mapping at the huge-page boundaries, so a slice may span three.)
func anonHugeKB(start, end uintptr) (int, error) {
	f, err := os.Open("/proc/self/smaps")
	if err != nil {
		return 0, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	inside, seen, sum := false, false, 0
	for sc.Scan() {
		line := sc.Text()
		fields := strings.Fields(line)
		if len(fields) == 0 {
			continue
		}
		if !strings.HasSuffix(fields[0], ":") { // a mapping's header: "lo-hi perms offset dev inode [path]"
			var lo, hi uintptr
			if _, err := fmt.Sscanf(fields[0], "%x-%x", &lo, &hi); err != nil {
				return 0, fmt.Errorf("/proc/self/smaps: %q: %v", line, err)
			}
			inside = lo < end && start < hi
			seen = seen || inside
			continue
		}
		var kb int
		if inside && fields[0] == "AnonHugePages:" {
			if _, err := fmt.Sscanf(line, "AnonHugePages: %d kB", &kb); err != nil {
				return 0, fmt.Errorf("/proc/self/smaps: %q: %v", line, err)
			}
			sum += kb
		}
	}
	if err := sc.Err(); err != nil {
		return 0, err
	}
	if !seen {
		return 0, fmt.Errorf("no mapping of /proc/self/smaps holds %#x–%#x", start, end)
	}
	return sum, nil
}
