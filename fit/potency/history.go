package potency

import (
	"math"
	"sort"
)

// DefaultMSRWindow is the number of most recent usable runs the production
// MSR is computed over when HistorySettings.MSRWindow is 0 (FACTS §4: a
// moving window of about 6 runs; a typical textbook value).
const DefaultMSRWindow = 6

// HistorySettings are the tunables of Summarize. A nil *HistorySettings,
// and any zero field, means the documented default.
type HistorySettings struct {
	// MSRWindow is how many of the most recent usable runs (by MeasuredAt)
	// the windowed production MSR uses. Zero means DefaultMSRWindow (6);
	// otherwise it must be at least MinMSRRuns (3). A window larger than
	// the history uses every usable run.
	MSRWindow int
	// Confidence is the level of the interval on the geometric mean. Zero
	// means DefaultConfidence (0.95); range (0, 1).
	Confidence float64
	// IncludeFailedPlates counts curves from plates that failed QC as
	// usable. False (the default) excludes them as "plate_qc_failed".
	IncludeFailedPlates bool
}

func (s *HistorySettings) resolve() (HistorySettings, error) {
	var r HistorySettings
	if s != nil {
		r = *s
	}
	if r.MSRWindow == 0 {
		r.MSRWindow = DefaultMSRWindow
	}
	if r.MSRWindow < MinMSRRuns {
		return r, fieldErr("msr_window", "must be at least %d, got %d", MinMSRRuns, r.MSRWindow)
	}
	c, err := checkConfidence(r.Confidence)
	if err != nil {
		return r, err
	}
	r.Confidence = c
	return r, nil
}

// History is a compound's potency record in one assay, summarised over its
// usable runs (see Classify).
type History struct {
	// Reasons[i] is why runs[i] was left out, or Usable.
	Reasons []Reason
	// Usable holds the indices of the usable runs in experiment-time
	// order (by MeasuredAt; equal times keep their input order).
	Usable []int
	// Settings are the settings used, defaults filled in.
	Settings HistorySettings

	// N is the number of usable runs.
	N int
	// Log is the summary of the usable runs' log10 EC50s: mean, SD, and
	// the t interval of the mean (see MeanLog); every field is NaN when
	// N = 0, and SD, SE and CI are NaN when N = 1.
	Log LogMean
	// GeoMeanEC50 = 10^Log.Mean (M), GeoMeanCI its interval
	// back-transformed, PEC50Mean = −Log.Mean.
	GeoMeanEC50 float64
	GeoMeanCI   Interval
	PEC50Mean   float64

	// MSR is the production MSR (see MSR) over the last Settings.MSRWindow
	// usable runs, MSRRuns of them; NaN when fewer than MinMSRRuns.
	MSR     float64
	MSRRuns int
	// MSROverall is the production MSR over every usable run; NaN when
	// fewer than MinMSRRuns.
	MSROverall float64

	// Excluded counts the runs left out, by reason.
	Excluded Excluded
}

// Summarize computes a compound's potency history from its runs (in any
// order). Invalid runs are an error naming the run and field
// ("runs[3].qualifier"); a history without usable runs is not an error (N is
// 0 and the statistics are NaN).
func Summarize(runs []Run, set *HistorySettings) (*History, error) {
	s, err := set.resolve()
	if err != nil {
		return nil, err
	}
	h := &History{Reasons: make([]Reason, len(runs)), Settings: s}
	for i, r := range runs {
		if err := r.check(i); err != nil {
			return nil, err
		}
		h.Reasons[i] = Classify(r, s.IncludeFailedPlates)
		if h.Reasons[i] == Usable {
			h.Usable = append(h.Usable, i)
		} else {
			h.Excluded.add(h.Reasons[i])
		}
	}
	sort.SliceStable(h.Usable, func(a, b int) bool {
		return runs[h.Usable[a]].MeasuredAt.Before(runs[h.Usable[b]].MeasuredAt)
	})
	logs := make([]float64, len(h.Usable))
	for k, i := range h.Usable {
		logs[k] = runs[i].LogEC50
	}
	h.N = len(logs)
	if h.N == 0 {
		nan := math.NaN()
		h.Log = LogMean{Mean: nan, SD: nan, SE: nan, DF: 0, CI: nanInterval(), Confidence: s.Confidence}
	} else {
		h.Log = meanLog(logs, s.Confidence)
	}
	h.GeoMeanEC50 = h.Log.GeoMean()
	h.GeoMeanCI = h.Log.GeoCI()
	h.PEC50Mean = h.Log.PMean()
	recent := logs[max(0, h.N-s.MSRWindow):]
	h.MSRRuns = len(recent)
	h.MSR = ProductionMSR(recent)
	h.MSROverall = ProductionMSR(logs)
	return h, nil
}
