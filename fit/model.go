package fit

import (
	"fmt"
	"math"
)

// Model names a curve family.
type Model string

// The models.
const (
	// Hill is the four-parameter Hill (logistic) equation on log10
	// concentration x (FACTS §1; Hill 1910):
	//
	//	y = bottom + (top − bottom) / (1 + 10^((log_ec50 − x)·hill))
	//
	// hill > 0 rises with concentration (agonist), hill < 0 falls
	// (inhibition); bottom and top are the lower and upper plateaus.
	Hill Model = "hill"
	// Hill5 is the asymmetric five-parameter (Richards) logistic,
	// parameterised so that log_ec50 stays the concentration of
	// half-maximal response whatever the asymmetry s > 0:
	//
	//	y = bottom + (top − bottom) / (1 + (2^(1/s) − 1)·10^((log_ec50 − x)·hill))^s
	//
	// s = 1 is the Hill equation (Richards 1959, J Exp Bot 10:290; the
	// half-maximal reparameterisation follows from solving y = midpoint).
	Hill5 Model = "hill5"
	// Bell is a rising Hill term times a falling one, for activation
	// followed by block or desensitisation (FACTS §1):
	//
	//	y = bottom + (top − bottom)·A(x)·B(x)
	//	A = 1/(1 + 10^((log_ec50 − x)·hill)),  B = 1/(1 + 10^((x − log_ic50)·hill_block))
	//
	// with hill, hill_block > 0. The observed peak and half-peak differ from
	// top and EC50 unless IC50 ≫ EC50.
	Bell Model = "bell"
)

// Models lists the models in a stable order.
var Models = []Model{Hill, Hill5, Bell}

// ParseModel returns the model with the given name; "" means Hill.
func ParseModel(s string) (Model, error) {
	switch Model(s) {
	case "", Hill:
		return Hill, nil
	case Hill5, Bell:
		return Model(s), nil
	}
	return "", fmt.Errorf("%w: unknown model %q (want hill, hill5 or bell)", ErrInvalidInput, s)
}

// Params returns the model's parameter names in order.
func (m Model) Params() []string { return m.curve().names() }

// Value returns the model's response at concentration conc (molar) for the
// parameters theta, in the order of Params.
func (m Model) Value(theta []float64, conc float64) float64 {
	return m.curve().value(theta, log10Conc(conc), nil)
}

// ValueGrad returns the response at conc (molar) and writes its gradient
// with respect to theta into grad (len(Params)).
func (m Model) ValueGrad(theta []float64, conc float64, grad []float64) float64 {
	return m.curve().value(theta, log10Conc(conc), grad)
}

func (m Model) curve() curveModel {
	switch m {
	case Hill, "":
		return hillCurve{}
	case Hill5:
		return hill5Curve{}
	case Bell:
		return bellCurve{}
	}
	panic("fit: unknown model " + string(m))
}

// maxParams is the largest number of parameters of any model.
const maxParams = 6

// curveModel is one curve family on x = log10(conc/M); x = −Inf is the
// vehicle.
type curveModel interface {
	names() []string
	// value returns f(x; θ) and, when grad is not nil, writes ∂f/∂θⱼ.
	value(theta []float64, x float64, grad []float64) float64
}

const ln10 = math.Ln10

// log10Conc maps a molar concentration to x, with 0 ↦ −Inf.
func log10Conc(c float64) float64 {
	if c == 0 {
		return math.Inf(-1)
	}
	return math.Log10(c)
}

// Parameter indices shared by the models.
const (
	iBottom = 0
	iTop    = 1
	iLogEC  = 2
	iHill   = 3
)
