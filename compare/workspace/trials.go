package workspace

import (
	"context"
	"time"

	"unshelved/compare"
	"unshelved/store"
)

// FunderQuery is the funders' view of the registered trials that pass the
// filter: results posted or not, on time or not, publication linked or
// not, months since completion counted to asOf when nothing is posted.
func FunderQuery(ctx context.Context, db *store.DB, f store.TrialFilter, asOf time.Time) (compare.FunderReport, error) {
	summaries, err := db.TrialSummaries(ctx, f)
	if err != nil {
		return compare.FunderReport{}, err
	}
	return compare.FunderView(summaries, compare.FunderOptions{AsOf: asOf, Sponsor: f.Sponsor}), nil
}
