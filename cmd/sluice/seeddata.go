package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"time"

	"sluice/db"
	"sluice/fit"
)

// seedSpec is the shape of an invented database: how many of each thing,
// and the seed every random choice derives from.
type seedSpec struct {
	Plates         int    // ≥ 1
	CurvesPerPlate int    // 1–maxSeedCurves
	Assays         int    // ≥ 1
	Compounds      int    // ≥ 1
	Seed           uint64 // the same seed gives the same database, row for row
	// End is the newest plate's experiment time; plates spread evenly over
	// the seedYears before it.
	End time.Time
}

// seedYears is the span of experiment times (measured_at) of seeded plates.
const seedYears = 4

// seedPoints is the number of concentrations of a seeded curve: a
// 3-fold series down from 10 µM, one well each.
const seedPoints = 7

// seedControls is the number of max and of min control wells per column
// pair: a plate's first column holds max controls, its second min controls.
//
// Formats: 96 wells hold 11 curves, 384 hold 50, 1536 hold 210.
const maxSeedCurves = (32*48 - 2*32) / seedPoints

// seedFormat returns the smallest plate format (rows, columns) that holds
// curves curves of seedPoints wells beside two control columns.
func seedFormat(curves int) (rows, cols int) {
	for _, f := range [][2]int{{8, 12}, {16, 24}, {32, 48}} {
		if f[0]*(f[1]-2) >= curves*seedPoints {
			return f[0], f[1]
		}
	}
	panic("seed: too many curves for a 1536-well plate")
}

// seedTargets are the invented assays' receptors and readouts (receptor
// names are the trade's; the assays are made up).
var seedTargets = [...][2]string{
	{"nAChR α7", "membrane potential dye"},
	{"GABA-A α1β2γ2", "whole-cell current"},
	{"GlyR α1", "membrane potential dye"},
	{"5-HT3A", "whole-cell current"},
	{"GluN1/GluN2A", "calcium flux"},
	{"GluA2 (flip)", "whole-cell current"},
	{"P2X3", "calcium flux"},
	{"ASIC1a", "membrane potential dye"},
}

// seedCatalogue returns the invented assays and compounds, and each
// compound's true log EC50 (molar).
func seedCatalogue(s seedSpec) ([]db.Assay, []db.Compound, []float64) {
	rng := rand.New(rand.NewPCG(s.Seed, math.MaxUint64))
	start := s.End.AddDate(-seedYears, 0, 0)
	assays := make([]db.Assay, s.Assays)
	for i := range assays {
		t := seedTargets[i%len(seedTargets)]
		assays[i] = db.Assay{ID: fmt.Sprintf("demo-assay-%03d", i+1), Name: fmt.Sprintf("%s screen %d", t[0], i/len(seedTargets)+1),
			Target: t[0], Readout: t[1], Units: "% of max", CreatedAt: start, CreatedBy: "seed"}
	}
	compounds := make([]db.Compound, s.Compounds)
	logEC50 := make([]float64, s.Compounds)
	for i := range compounds {
		id := fmt.Sprintf("demo-cmpd-%06d", i+1)
		compounds[i] = db.Compound{ID: id, Name: id, Target: seedTargets[i%len(seedTargets)][0], CreatedAt: start, CreatedBy: "seed"}
		logEC50[i] = -8.5 + 4*rng.Float64() // pEC50 4.5–8.5
	}
	return assays, compounds, logEC50
}

// seedPlate invents plate i (0-based) with its wells, QC figures and
// curves. Each plate has a random stream of its own, seeded by (seed, i),
// so a plate does not depend on how the load is chunked.
func seedPlate(s seedSpec, i int, assays []db.Assay, compounds []db.Compound, logEC50 []float64) (db.BulkPlate, []db.CurveResult) {
	rng := rand.New(rand.NewPCG(s.Seed, uint64(i)))
	span := s.End.Sub(s.End.AddDate(-seedYears, 0, 0))
	measured := s.End.Add(-span + time.Duration(float64(span)*(float64(i)+rng.Float64())/float64(s.Plates))).Truncate(time.Second).UTC()
	created := measured.Add(time.Duration(5+rng.IntN(120)) * time.Minute)
	id := seedUUIDv7(created, rng)
	assay := assays[rng.IntN(len(assays))].ID
	rows, cols := seedFormat(s.CurvesPerPlate)
	// noise: most plates are good, a few are noisy (Z′ below 0.5).
	noise := 3 + 2*rng.Float64()
	if rng.IntN(20) == 0 {
		noise = 12 + 6*rng.Float64()
	}
	settings := fmt.Sprintf(`{"model":"hill4","resamples":0,"seed":%d}`, rng.Uint64()>>12)
	wells := make([]db.WellRow, 0, rows*cols)
	well := func(r, c int, role, compound string, conc, v float64) {
		wells = append(wells, db.WellRow{Well: seedWellName(r, c), Row: r, Col: c, Role: role, CompoundID: compound, Conc: conc, Value: &v})
	}
	var maxV, minV []float64
	for r := 0; r < rows; r++ {
		v := 100 + noise*rng.NormFloat64()
		maxV = append(maxV, v)
		well(r, 0, "max_control", "", 0, v)
		v = noise * rng.NormFloat64()
		minV = append(minV, v)
		well(r, 1, "min_control", "", 0, v)
	}
	qc := seedQC(maxV, minV)
	first := rng.IntN(len(compounds))
	curves := make([]db.CurveResult, s.CurvesPerPlate)
	for k := range curves {
		ci := (first + k*7919) % len(compounds) // 7919 is prime: distinct compounds on a plate
		cmpd := compounds[ci].ID
		trueLog := logEC50[ci] + 0.1*rng.NormFloat64()
		hill := 0.8 + 0.6*rng.Float64()
		for p := 0; p < seedPoints; p++ {
			slot := k*seedPoints + p
			r, c := slot%rows, 2+slot/rows
			conc := 1e-5 / math.Pow(3, float64(p))
			v := 100/(1+math.Pow(10, (trueLog-math.Log10(conc))*hill)) + noise*rng.NormFloat64()
			well(r, c, "sample", cmpd, conc, v)
		}
		curves[k] = seedCurve(id, assay, cmpd, measured, created, trueLog, hill, noise, rng)
		curves[k].Settings = []byte(settings)
	}
	p := db.Plate{ID: id, CreatedAt: created, SubmittedBy: "seed", AssayID: assay, Barcode: fmt.Sprintf("DEMO-%07d", i+1),
		Format: rows * cols, MeasuredAt: &measured, ConcUnit: "M", Mode: "agonist", Settings: []byte(settings),
		InputSHA256: seedHex(rng), Status: db.PlateDone, QC: seedQCDoc(qc), Figures: &qc,
		CurvesTotal: s.CurvesPerPlate, CurvesDone: s.CurvesPerPlate}
	for k := range curves {
		curves[k].InputSHA256 = p.InputSHA256
	}
	return db.BulkPlate{Plate: p, Wells: wells}, curves
}

// seedCurve invents the fitted result of one curve near its true values:
// estimates as columns, every parameter in Params, and a small result
// document (no covariance, no bootstrap draws: seeded curves have B = 0, so
// that row sizes stay those of a typical stored curve).
func seedCurve(plateID, assay, compound string, measured, created time.Time, trueLog, hill, noise float64, rng *rand.Rand) db.CurveResult {
	se := [4]float64{0.05 + 0.1*rng.Float64(), 0.05 + 0.2*rng.Float64(), noise / 2, noise / 2}
	est := [4]float64{trueLog + se[0]*rng.NormFloat64(), hill + se[1]*rng.NormFloat64(), 100 + se[2]*rng.NormFloat64(), se[3] * rng.NormFloat64()}
	names := [4]string{"log_ec50", "hill", "top", "bottom"}
	status := "converged"
	if rng.IntN(50) == 0 {
		status = "max_iterations"
	}
	var ps []db.FitParam
	var es [4]db.Estimate
	doc := []byte(`{"curve":"` + compound + `","model":"hill4","status":"` + status + `","params":{`)
	for j := range names {
		v, s := est[j], se[j]
		lo, hi := v-1.96*s, v+1.96*s
		ps = append(ps, db.FitParam{Name: names[j], Estimate: &v, SE: &s, WaldLo: &lo, WaldHi: &hi})
		es[j] = db.Estimate{Value: &v, Lo: &lo, Hi: &hi}
		if j > 0 {
			doc = append(doc, ',')
		}
		doc = append(doc, `"`+names[j]+`":{"estimate":`...)
		doc = strconv.AppendFloat(doc, v, 'g', 8, 64)
		doc = append(doc, `,"se":`...)
		doc = strconv.AppendFloat(doc, s, 'g', 6, 64)
		doc = append(doc, `,"wald_ci":[`...)
		doc = strconv.AppendFloat(doc, lo, 'g', 8, 64)
		doc = append(doc, ',')
		doc = strconv.AppendFloat(doc, hi, 'g', 8, 64)
		doc = append(doc, `],"fixed":false,"at_bound":false}`...)
	}
	rss := noise * noise * float64(seedPoints-4) * (0.5 + rng.Float64())
	doc = append(doc, `},"stats":{"n":7,"dof":3,"rss":`...)
	doc = strconv.AppendFloat(doc, rss, 'g', 6, 64)
	doc = append(doc, `},"engine_version":"`+fit.EngineVersion+`"}`...)
	if status != "converged" {
		es[0].Value = nil // a potency only for a usable fit
	}
	return db.CurveResult{ID: plateID + ":" + compound, Kind: db.KindPlateCurve, PlateID: plateID, CurveKey: compound,
		AssayID: assay, CompoundID: compound, MeasuredAt: measured, CreatedAt: created, SubmittedBy: "seed", Model: "hill4",
		Status: status, LogEC50: es[0], Hill: es[1], Top: es[2], Bottom: es[3], EngineVersion: fit.EngineVersion,
		Result: doc, Params: ps}
}

// seedQC computes a plate's QC figures from its controls: Z′ = 1 −
// 3(σmax + σmin)/|μmax − μmin| (Zhang, Chung & Oldenburg 1999, eq. 1),
// SW = (|μmax − μmin| − 3(σmax + σmin))/σmax, S/B = μmax/μmin, CV = σ/μ.
func seedQC(maxV, minV []float64) db.PlateQC {
	mMax, sMax := meanSD(maxV)
	mMin, sMin := meanSD(minV)
	d := math.Abs(mMax - mMin)
	z := 1 - 3*(sMax+sMin)/d
	q := db.PlateQC{ZPrime: z, SignalWindow: (d - 3*(sMax+sMin)) / sMax, SignalToBackground: mMax / mMin,
		MaxMean: mMax, MaxCV: sMax / mMax, MinMean: mMin, MinCV: sMin / math.Abs(mMin), Pass: z >= 0.5}
	if mMin <= 0 {
		q.SignalToBackground = math.NaN() // undefined for a min mean at or below zero
	}
	if !q.Pass {
		q.Reasons = []string{"z_prime below 0.5"}
	}
	return q
}

func seedQCDoc(q db.PlateQC) []byte {
	num := func(v float64) string {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return "null"
		}
		return strconv.FormatFloat(v, 'g', 6, 64)
	}
	reasons := "[]"
	if len(q.Reasons) > 0 {
		reasons = `["` + q.Reasons[0] + `"]`
	}
	return []byte(fmt.Sprintf(`{"z_prime":%s,"signal_window":%s,"signal_background":%s,"cv":{"max_control":%s,"min_control":%s},"pass":%t,"reasons":%s}`,
		num(q.ZPrime), num(q.SignalWindow), num(q.SignalToBackground), num(q.MaxCV), num(q.MinCV), q.Pass, reasons))
}

func meanSD(v []float64) (mean, sd float64) {
	for _, x := range v {
		mean += x
	}
	mean /= float64(len(v))
	for _, x := range v {
		sd += (x - mean) * (x - mean)
	}
	return mean, math.Sqrt(sd / float64(len(v)-1))
}

// seedWellName is a well's canonical name: A01 … P24, AA01 … AF48.
func seedWellName(r, c int) string {
	row := string(rune('A' + r))
	if r >= 26 {
		row = "A" + string(rune('A'+r-26))
	}
	return fmt.Sprintf("%s%02d", row, c+1)
}

// seedUUIDv7 makes a time-ordered ID like the service's (RFC 9562 §5.7)
// from t and the plate's random stream.
func seedUUIDv7(t time.Time, rng *rand.Rand) string {
	var b [16]byte
	ms := uint64(t.UnixMilli())
	for i := 0; i < 6; i++ {
		b[i] = byte(ms >> (40 - 8*i))
	}
	hi, lo := rng.Uint64(), rng.Uint64()
	for i := 6; i < 16; i++ {
		if i < 8 {
			b[i] = byte(hi >> (8 * (i - 6)))
		} else {
			b[i] = byte(lo >> (8 * (i - 8)))
		}
	}
	b[6] = 0x70 | b[6]&0x0f
	b[8] = 0x80 | b[8]&0x3f
	return fmt.Sprintf("%x-%x-%x-%x-%x", b[0:4], b[4:6], b[6:8], b[8:10], b[10:16])
}

func seedHex(rng *rand.Rand) string {
	return fmt.Sprintf("%016x%016x%016x%016x", rng.Uint64(), rng.Uint64(), rng.Uint64(), rng.Uint64())
}
