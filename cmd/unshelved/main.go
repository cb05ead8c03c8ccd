// Command unshelved audits published meta-analyses of continuous outcomes
// against the results that trial registries hold for unpublished trials.
package main

import (
	"fmt"
	"os"
	"runtime/pprof"
)

func main() {
	os.Exit(profiled(func() int { return Main(os.Args[1:], defaultIO()) }))
}

// profiled runs f under the CPU profiler when UNSHELVED_CPUPROFILE names a
// file to write the profile to (a developer's aid; see DEVELOPERS.md).
func profiled(f func() int) int {
	path := os.Getenv("UNSHELVED_CPUPROFILE")
	if path == "" {
		return f()
	}
	out, err := os.Create(path)
	if err != nil {
		fmt.Fprintf(os.Stderr, "unshelved: UNSHELVED_CPUPROFILE: %v\n", err)
		return 1
	}
	defer out.Close()
	if err := pprof.StartCPUProfile(out); err != nil {
		fmt.Fprintf(os.Stderr, "unshelved: UNSHELVED_CPUPROFILE: %v\n", err)
		return 1
	}
	defer pprof.StopCPUProfile()
	return f()
}
