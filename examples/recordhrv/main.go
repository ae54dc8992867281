// Command recordhrv prints five-minute HRV every 30 s for a PhysioNet
// record, from its reference beat annotations or from detected beats:
//
//	go run ./examples/recordhrv ../shared/physionet/mitdb/100 atr
package main

import (
	"fmt"
	"io"
	"os"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
)

func main() {
	if err := run(os.Args[1:], os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "recordhrv:", err)
		os.Exit(1)
	}
}

// run is the whole example: open, extract, print.
func run(args []string, w io.Writer) error {
	if len(args) == 0 {
		return fmt.Errorf("usage: recordhrv RECORD [ANNOTATOR]")
	}
	cfg := features.Config{Families: []string{features.FamilyHRV}}
	opt := recording.Options{}
	if len(args) > 1 { // HRV from the record's own beat annotations
		cfg.BeatsAnnotator, opt.Annotators = args[1], []string{args[1]}
	}
	rec, err := recording.OpenWith(args[0], opt)
	if err != nil {
		return err
	}
	tab, err := features.Extract(rec, cfg)
	if err != nil {
		return err
	}
	hr, rmssd, sdnn, lfhf := tab.Float("mean_hr_bpm"), tab.Float("rmssd_ms"), tab.Float("sdnn_ms"), tab.Float("lf_hf_ratio")
	fmt.Fprintln(w, "t_s\tmean_hr_bpm\tsdnn_ms\trmssd_ms\tlf_hf_ratio")
	for i, r := range tab.Rows {
		fmt.Fprintf(w, "%.0f\t%.1f\t%.1f\t%.1f\t%.2f\n", r.Offset, hr[i], sdnn[i], rmssd[i], lfhf[i])
	}
	return nil
}
