package report_test

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/tidalbeat/tidalbeat/features/report"
)

// Write renders whatever the Input holds; parts left empty still get their
// figure, which says it has no data. Real inputs come from Analyze.
func ExampleWrite() {
	in := &report.Input{Record: "bench-test", Duration: 600}
	for i := 1; i <= 600; i++ {
		in.Beats.TimeS = append(in.Beats.TimeS, float64(i))
		in.Beats.RRms = append(in.Beats.RRms, 1000)
	}
	var buf bytes.Buffer
	if err := report.Write(&buf, in); err != nil {
		fmt.Println(err)
		return
	}
	doc := buf.String()
	fmt.Println("figures:", strings.Count(doc, "<svg"))
	fmt.Println("caution:", strings.Contains(doc, "not a medical device"))
	fmt.Println("external references:", strings.Contains(doc, "<script") || strings.Contains(doc, "<link"))
	// Output:
	// figures: 7
	// caution: true
	// external references: false
}
