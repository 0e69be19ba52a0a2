package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"time"

	"sluice/db"
)

// seedChunk is the number of plates stored per transaction: large enough
// that COPY's per-statement cost vanishes, small enough to keep a chunk's
// rows (~80 000 wells of 384-well plates) in memory.
const seedChunk = 200

// runSeed is `sluice seed`: fill the store with an invented, seeded
// database of realistic size (assays, compounds, finished plates with
// wells and QC figures, curve results), for benchmarks of the read paths.
func runSeed(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("seed", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var s seedSpec
	fs.IntVar(&s.Plates, "plates", 100, "plates to store (≥ 1)")
	fs.IntVar(&s.CurvesPerPlate, "curves-per-plate", 50, fmt.Sprintf("curves per plate, 1–%d; 7 wells each plus two control columns decide the format (96, 384 or 1536)", maxSeedCurves))
	fs.IntVar(&s.Assays, "assays", 12, "invented assays (≥ 1)")
	fs.IntVar(&s.Compounds, "compounds", 5000, "invented compounds demo-cmpd-000001 … (≥ 1)")
	seed := fs.Uint64("seed", 1, "the seed every random choice derives from; the same seed gives the same rows")
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	s.Seed = *seed
	s.End = time.Date(2026, 6, 30, 18, 0, 0, 0, time.UTC)
	switch {
	case s.Plates < 1:
		fmt.Fprintln(stderr, "sluice seed: --plates must be at least 1")
		return 2
	case s.CurvesPerPlate < 1 || s.CurvesPerPlate > maxSeedCurves:
		fmt.Fprintf(stderr, "sluice seed: --curves-per-plate must be 1–%d\n", maxSeedCurves)
		return 2
	case s.Assays < 1:
		fmt.Fprintln(stderr, "sluice seed: --assays must be at least 1")
		return 2
	case s.Compounds < s.CurvesPerPlate:
		fmt.Fprintln(stderr, "sluice seed: --compounds must be at least --curves-per-plate (a compound appears once per plate)")
		return 2
	}
	ctx := context.Background()
	store, err := db.Open(ctx, getenv("SLUICE_DATABASE_URL"), *data)
	if err != nil {
		fmt.Fprintf(stderr, "sluice seed: %v\n", err)
		return 1
	}
	defer store.Close()
	start := time.Now()
	if err := seedStore(ctx, store, s, func(plates int) {
		fmt.Fprintf(stderr, "seeded %d/%d plates (%.0f s)\n", plates, s.Plates, time.Since(start).Seconds())
	}); err != nil {
		fmt.Fprintf(stderr, "sluice seed: %v\n", err)
		return 1
	}
	fmt.Fprintf(stdout, "seeded %d assays, %d compounds, %d plates, %d curves in %.1f s\n",
		s.Assays, s.Compounds, s.Plates, s.Plates*s.CurvesPerPlate, time.Since(start).Seconds())
	return 0
}

// seedStore loads the database s describes, seedChunk plates per Load
// (one transaction each); the catalogue goes with the first chunk. The
// next chunk is generated while the store writes the current one.
func seedStore(ctx context.Context, store db.Loader, s seedSpec, progress func(plates int)) error {
	assays, compounds, logEC50 := seedCatalogue(s)
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	chunks := make(chan *db.Bulk, 1)
	go func() {
		defer close(chunks)
		for lo := 0; lo < s.Plates; lo += seedChunk {
			b := &db.Bulk{}
			if lo == 0 {
				b.Assays, b.Compounds = assays, compounds
			}
			for i := lo; i < min(lo+seedChunk, s.Plates); i++ {
				p, curves := seedPlate(s, i, assays, compounds, logEC50)
				b.Plates = append(b.Plates, p)
				b.Curves = append(b.Curves, curves...)
			}
			select {
			case chunks <- b:
			case <-ctx.Done():
				return
			}
		}
	}()
	done := 0
	for b := range chunks {
		if err := store.Load(ctx, b); err != nil {
			cancel()
			for range chunks { // let the generator finish
			}
			return fmt.Errorf("load plates %d–%d: %w", done+1, done+len(b.Plates), err)
		}
		done += len(b.Plates)
		progress(done)
	}
	return nil
}
