package compare

import (
	"reflect"
	"testing"
)

func TestReviewsNotStudies(t *testing.T) {
	got := reviewsNotStudies([]string{
		"Only 3 studies: tau² is imprecise and the prediction interval is wide.",
		"Only one study: heterogeneity cannot be estimated.",
		"Studies agree; a case study stays.",
		"studying nothing",
	})
	want := []string{
		"Only 3 reviews: tau² is imprecise and the prediction interval is wide.",
		"Only one review: heterogeneity cannot be estimated.",
		"Reviews agree; a case review stays.",
		"studying nothing",
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got  %q\nwant %q", got, want)
	}
}
