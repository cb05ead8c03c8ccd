// Command batchws writes a generated batch of reviews (package batchgen)
// into a new workspace database, for the audit benchmarks in
// testdata/bench/audit.sh. Everything in it is invented.
//
//	batchws -db FILE -reviews N [-studies K] [-seed S]
package main

import (
	"context"
	"flag"
	"fmt"
	"os"

	"unshelved/compare/internal/batchgen"
	"unshelved/store"
)

func main() {
	path := flag.String("db", "", "workspace database to create (must not exist)")
	reviews := flag.Int("reviews", 2000, "number of reviews")
	studies := flag.Int("studies", 12, "registered trials per review")
	seed := flag.Uint64("seed", 1, "seed of the batch")
	flag.Parse()
	if err := run(*path, *reviews, *studies, *seed); err != nil {
		fmt.Fprintln(os.Stderr, "batchws:", err)
		os.Exit(1)
	}
}

func run(path string, reviews, studies int, seed uint64) error {
	if path == "" {
		return fmt.Errorf("-db FILE is required")
	}
	if _, err := os.Stat(path); err == nil {
		return fmt.Errorf("%s exists; give a new file", path)
	}
	ctx := context.Background()
	db, err := store.Open(ctx, path)
	if err != nil {
		return err
	}
	defer db.Close()
	b := batchgen.Generate(batchgen.Settings{Reviews: reviews, MinStudies: studies, MaxStudies: studies, Seed: seed})
	if err := batchgen.WriteWorkspace(ctx, db, b); err != nil {
		return err
	}
	return db.Close()
}
