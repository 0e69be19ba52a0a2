package service

import "sync"

// maxKnownRefs bounds the records knownRefs remembers: about 5 MB of IDs
// at most. When it is reached the set starts again empty.
const maxKnownRefs = 100_000

// knownRefs remembers the assays and compounds this process has seen in
// the store, so that a fit naming them is not preceded by a lookup each:
// a pipeline posts many fits of one assay, and a compound's replicates
// come together. Only existence is remembered, never absence, and no code
// deletes an assay or a compound, so a remembered record still exists in
// every process. An assay deleted behind Sluice's back is still caught by
// the curve's foreign key when the fit is stored; a compound so deleted
// is not registered again (a curve needs no catalogue entry for its
// compound, as on a plate).
type knownRefs struct {
	mu  sync.Mutex
	ids map[knownRef]struct{}
}

type knownRef struct{ kind, id string }

func (k *knownRefs) has(kind, id string) bool {
	k.mu.Lock()
	defer k.mu.Unlock()
	_, ok := k.ids[knownRef{kind, id}]
	return ok
}

func (k *knownRefs) add(kind, id string) {
	k.mu.Lock()
	defer k.mu.Unlock()
	if k.ids == nil || len(k.ids) >= maxKnownRefs {
		k.ids = make(map[knownRef]struct{})
	}
	k.ids[knownRef{kind, id}] = struct{}{}
}
