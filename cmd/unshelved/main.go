// Command unshelved audits published meta-analyses of continuous outcomes
// against the results that trial registries hold for unpublished trials.
package main

import "os"

func main() {
	os.Exit(Main(os.Args[1:], defaultIO()))
}
