package workspace

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strconv"

	"unshelved/compare"
	"unshelved/store"
)

// LoadRun returns stored run id; kind, when not empty, is the kind the
// caller expects. A missing run or one of another kind is an error saying
// how to list or show it.
func LoadRun(ctx context.Context, db *store.DB, id int64, kind string) (store.Run, error) {
	run, err := db.Run(ctx, id)
	if errors.Is(err, store.ErrNotFound) {
		return run, fmt.Errorf("no run %d in workspace %s; list the runs with 'unshelved runs'", id, db.Path())
	}
	if err != nil {
		return run, err
	}
	if kind != "" && run.Kind != kind {
		return run, fmt.Errorf("run %d is a %s run, not an %s run; show it with 'unshelved runs show %d'", id, run.Kind, kind, id)
	}
	return run, nil
}

// AuditRunLevel is the confidence level an audit run was made with, read
// from its stored options.
func AuditRunLevel(run store.Run) (float64, error) {
	var o struct {
		Level float64 `json:"level"`
	}
	if err := json.Unmarshal([]byte(run.Options), &o); err != nil || !(o.Level > 0 && o.Level < 1) {
		return 0, fmt.Errorf("run %d: options hold no confidence level: %s", run.ID, run.Options)
	}
	return o.Level, nil
}

// EachStoredAudit calls emit with each review's stored audit of run id, in
// review order: its JSON text and, when decode is set, the audit decoded.
func EachStoredAudit(ctx context.Context, db *store.DB, id int64, decode bool, emit func(a *compare.ReviewAudit, js []byte) error) error {
	return db.EachRunResult(ctx, id, func(reviewID string, js []byte) error {
		if !decode {
			return emit(nil, js)
		}
		var a compare.ReviewAudit
		if err := json.Unmarshal(js, &a); err != nil {
			return fmt.Errorf("decode review %s: %w", reviewID, err)
		}
		return emit(&a, js)
	})
}

// FieldChange is one field that differs between two runs.
type FieldChange struct {
	Field      string          `json:"field"`
	Before     json.RawMessage `json:"before"`
	After      json.RawMessage `json:"after"`
	Difference *float64        `json:"difference"`
}

// ReviewDiff is what changed in one review between two runs.
type ReviewDiff struct {
	ReviewID string        `json:"review_id"`
	InFirst  bool          `json:"in_first"`
	InSecond bool          `json:"in_second"`
	Changes  []FieldChange `json:"changes"`
}

// DiffRuns compares audit runs first and second review by review and
// calls emit for each review that differs or is in one run only: first
// the reviews of the first run in order, then those only in the second.
func DiffRuns(ctx context.Context, db *store.DB, first, second int64, emit func(ReviewDiff) error) error {
	for _, id := range []int64{first, second} {
		r, err := LoadRun(ctx, db, id, "")
		if err != nil {
			return err
		}
		if r.Kind != "audit" {
			return fmt.Errorf("run %d is a %s run; 'runs diff' compares audit runs", id, r.Kind)
		}
	}
	seen := map[string]bool{}
	err := db.EachRunResult(ctx, first, func(reviewID string, js []byte) error {
		seen[reviewID] = true
		other, err := db.RunResult(ctx, second, reviewID)
		if errors.Is(err, store.ErrNotFound) {
			return emit(ReviewDiff{ReviewID: reviewID, InFirst: true, Changes: []FieldChange{}})
		}
		if err != nil {
			return err
		}
		changes, err := DiffJSON(js, other)
		if err != nil {
			return fmt.Errorf("review %s: %w", reviewID, err)
		}
		if len(changes) == 0 {
			return nil
		}
		return emit(ReviewDiff{ReviewID: reviewID, InFirst: true, InSecond: true, Changes: changes})
	})
	if err != nil {
		return err
	}
	return db.EachRunResult(ctx, second, func(reviewID string, _ []byte) error {
		if seen[reviewID] {
			return nil
		}
		return emit(ReviewDiff{ReviewID: reviewID, InSecond: true, Changes: []FieldChange{}})
	})
}

// DiffJSON flattens two JSON objects into dotted paths of their scalar
// values (lists and the funnel plot's points are left out) and returns the
// paths whose values differ, in path order, with the difference of two
// numbers.
func DiffJSON(a, b []byte) ([]FieldChange, error) {
	fa, err := flattenJSON(a)
	if err != nil {
		return nil, err
	}
	fb, err := flattenJSON(b)
	if err != nil {
		return nil, err
	}
	keys := map[string]bool{}
	for k := range fa {
		keys[k] = true
	}
	for k := range fb {
		keys[k] = true
	}
	var names []string
	for k := range keys {
		if fa[k] != fb[k] {
			names = append(names, k)
		}
	}
	sort.Strings(names)
	out := make([]FieldChange, 0, len(names))
	for _, k := range names {
		c := FieldChange{Field: k, Before: rawOrNull(fa[k], k, fa), After: rawOrNull(fb[k], k, fb)}
		x, errX := strconv.ParseFloat(fa[k], 64)
		y, errY := strconv.ParseFloat(fb[k], 64)
		if errX == nil && errY == nil {
			d := y - x
			c.Difference = &d
		}
		out = append(out, c)
	}
	return out, nil
}

// rawOrNull returns the JSON text of a path, null when the path is absent.
func rawOrNull(v, k string, m map[string]string) json.RawMessage {
	if _, ok := m[k]; !ok {
		return json.RawMessage("null")
	}
	return json.RawMessage(v)
}

func flattenJSON(js []byte) (map[string]string, error) {
	dec := json.NewDecoder(bytes.NewReader(js))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		return nil, err
	}
	out := map[string]string{}
	var walk func(prefix string, v any) error
	walk = func(prefix string, v any) error {
		switch x := v.(type) {
		case map[string]any:
			for k, e := range x {
				p := k
				if prefix != "" {
					p = prefix + "." + k
				}
				if p == "bias.funnel" {
					continue
				}
				if err := walk(p, e); err != nil {
					return err
				}
			}
		case []any:
		default:
			b, err := json.Marshal(x)
			if err != nil {
				return err
			}
			out[prefix] = string(b)
		}
		return nil
	}
	return out, walk("", v)
}

// DeleteRuns deletes stored runs and reports whether their space went
// back to the file system (otherwise 'db vacuum' gives it back). A run
// that does not exist is an error and nothing is deleted.
func DeleteRuns(ctx context.Context, db *store.DB, ids []int64) (reclaimed bool, err error) {
	reclaimed, err = db.DeleteRuns(ctx, ids)
	if errors.Is(err, store.ErrNotFound) {
		return false, fmt.Errorf("%w in workspace %s; nothing was deleted (list the runs with 'unshelved runs')", err, db.Path())
	}
	return reclaimed, err
}

// RunsToPrune lists, in id order, the stored runs beyond the keep most
// recent of each kind.
func RunsToPrune(ctx context.Context, db *store.DB, keep int) ([]int64, error) {
	runs, err := db.Runs(ctx, "")
	if err != nil {
		return nil, err
	}
	kept := map[string]int{}
	var drop []int64
	for i := len(runs) - 1; i >= 0; i-- { // newest first
		r := runs[i]
		if kept[r.Kind] < keep {
			kept[r.Kind]++
			continue
		}
		drop = append(drop, r.ID)
	}
	sort.Slice(drop, func(i, j int) bool { return drop[i] < drop[j] })
	return drop, nil
}

// StoredSummaryText is the JSON text of summary run run, as stored.
func StoredSummaryText(ctx context.Context, db *store.DB, run store.Run) ([]byte, error) {
	js, err := db.RunResult(ctx, run.ID, "")
	if err != nil {
		return nil, fmt.Errorf("summary run %d (%s) holds no result: %w", run.ID, run.Status, err)
	}
	return js, nil
}
