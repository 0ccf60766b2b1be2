package main

import (
	"fmt"
	"io"
	"os"
	"os/exec"
	"slices"
	"syscall"
	"time"
	"unsafe"
)

// onTTY runs the command n times with its standard output and error on a
// fresh pseudo-terminal (so that foilrun draws its terminal tables) and
// prints the minimum and median wall time in seconds, from just before
// the command starts to its exit: the command's own time, process start
// included, without the start of a program such as script(1) and the
// shell it runs the command in.
func onTTY(n int, argv []string) error {
	times := make([]time.Duration, 0, n)
	for range n {
		d, err := timeOnTTY(argv)
		if err != nil {
			return err
		}
		times = append(times, d)
	}
	slices.Sort(times)
	fmt.Printf("%.4f %.4f\n", times[0].Seconds(), times[(len(times)-1)/2].Seconds())
	return nil
}

func timeOnTTY(argv []string) (time.Duration, error) {
	master, slave, err := openPTY()
	if err != nil {
		return 0, fmt.Errorf("pseudo-terminal: %w", err)
	}
	defer master.Close()
	drained := make(chan error, 1)
	go func() { _, err := io.Copy(io.Discard, master); drained <- err }()
	cmd := exec.Command(argv[0], argv[1:]...)
	cmd.Stdout, cmd.Stderr = slave, slave
	start := time.Now()
	if err := cmd.Start(); err != nil {
		slave.Close()
		return 0, err
	}
	err = cmd.Wait()
	d := time.Since(start)
	slave.Close()
	<-drained // EIO once the last writer is gone: the end of the output
	if err != nil {
		return 0, fmt.Errorf("%s: %w", argv[0], err)
	}
	return d, nil
}

// openPTY opens a new pseudo-terminal pair (/dev/ptmx, unlocked, and its
// /dev/pts/N).
func openPTY() (master, slave *os.File, err error) {
	master, err = os.OpenFile("/dev/ptmx", os.O_RDWR|syscall.O_NOCTTY, 0)
	if err != nil {
		return nil, nil, err
	}
	var unlock int32
	if err := ioctl(master, syscall.TIOCSPTLCK, unsafe.Pointer(&unlock)); err != nil {
		master.Close()
		return nil, nil, err
	}
	var num uint32
	if err := ioctl(master, syscall.TIOCGPTN, unsafe.Pointer(&num)); err != nil {
		master.Close()
		return nil, nil, err
	}
	slave, err = os.OpenFile(fmt.Sprintf("/dev/pts/%d", num), os.O_RDWR|syscall.O_NOCTTY, 0)
	if err != nil {
		master.Close()
		return nil, nil, err
	}
	return master, slave, nil
}

func ioctl(f *os.File, req uintptr, arg unsafe.Pointer) error {
	if _, _, e := syscall.Syscall(syscall.SYS_IOCTL, f.Fd(), req, uintptr(arg)); e != 0 {
		return e
	}
	return nil
}
