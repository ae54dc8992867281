package recording

import "fmt"

// Temporary: the EDF and CSV readers land in the next commits; until then
// these formats are refused with ErrFormat.

// ResampleReport describes how irregular timestamps were resampled.
type ResampleReport struct{}

// CSVOptions adjusts the CSV reader.
type CSVOptions struct{}

func readCSVFile(path string, _ CSVOptions) (*Recording, error) {
	return nil, fmt.Errorf("csv %s: reader not built yet: %w", path, ErrFormat)
}
