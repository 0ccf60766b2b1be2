// Command foilrun plans, checks, predicts, logs and learns from graphene
// CVD growth runs on copper foil. See README.md.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], newStreams()))
}
