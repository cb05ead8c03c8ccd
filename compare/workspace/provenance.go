package workspace

import (
	"context"
	"unshelved/compare"
	"unshelved/store"
)

// LoadProvenance builds the provenance of each audit (by review id) from
// the workspace: the inputs of the audit, the ingested files and, when
// screen is set, a fresh look by matching at the workspace's trials for
// each review (nothing is saved), so that the flow counts the trials that
// the matching criteria left out.
func LoadProvenance(ctx context.Context, db *store.DB, audits []compare.ReviewAudit, run compare.RunInfo, screen bool) (map[string]compare.Provenance, error) {
	out := make(map[string]compare.Provenance, len(audits))
	if len(audits) == 0 {
		return out, nil
	}
	ids := make([]string, len(audits))
	for i, a := range audits {
		ids[i] = a.ReviewID
	}
	inputs, err := LoadAuditInputs(ctx, db, ids)
	if err != nil {
		return nil, err
	}
	files, err := db.Sources(ctx)
	if err != nil {
		return nil, err
	}
	screened := map[string]*compare.ReviewProposals{}
	if screen {
		rep, err := Match(ctx, db, compare.MatchOptions{ReviewIDs: ids})
		if err != nil {
			return nil, err
		}
		for i := range rep.Reviews {
			screened[rep.Reviews[i].ReviewID] = &rep.Reviews[i]
		}
	}
	for i, a := range audits {
		out[a.ReviewID] = compare.ReviewProvenance(a, inputs[i], run, screened[a.ReviewID], files)
	}
	return out, nil
}
