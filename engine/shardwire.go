package engine

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
)

// shardResult is a Result as a shard file stores it: every field, the
// p-value its multiplicity family counts (pFamily, which a table never
// shows) included, and every float exact.
type shardResult struct {
	Test         string   `json:"test"`
	X            string   `json:"x"`
	Y            string   `json:"y"`
	Group        string   `json:"group"`
	Measure      string   `json:"measure"`
	N            int      `json:"n"`
	NDropped     int      `json:"n_dropped"`
	Estimate     exact    `json:"estimate"`
	Alternative  string   `json:"alternative"`
	PValue       exact    `json:"p_value"`
	PMethod      string   `json:"p_method"`
	CILow        exact    `json:"ci_low"`
	CIHigh       exact    `json:"ci_high"`
	CILevel      exact    `json:"ci_level"`
	CIMethod     string   `json:"ci_method"`
	PAdjusted    exact    `json:"p_adjusted"`
	AdjustMethod string   `json:"adjust_method"`
	TiesX        exact    `json:"ties_x"`
	TiesY        exact    `json:"ties_y"`
	Warnings     []string `json:"warnings"`
	Controls     []string `json:"controls"`
	PFamily      exact    `json:"p_family"`
}

func wireResult(r Result) shardResult {
	return shardResult{
		Test: r.Test, X: r.X, Y: r.Y, Group: r.Group, Measure: r.Measure, N: r.N, NDropped: r.NDropped,
		Estimate: exact(r.Estimate), Alternative: r.Alternative, PValue: exact(r.PValue), PMethod: r.PMethod,
		CILow: exact(r.CILow), CIHigh: exact(r.CIHigh), CILevel: exact(r.CILevel), CIMethod: r.CIMethod,
		PAdjusted: exact(r.PAdjusted), AdjustMethod: r.AdjustMethod, TiesX: exact(r.TiesX), TiesY: exact(r.TiesY),
		Warnings: nonNilStrings(r.Warnings), Controls: nonNilStrings(r.Controls), PFamily: exact(r.pFamily),
	}
}

// result turns a stored record back into the Result it was.
func (w *shardResult) result() (Result, error) {
	if w.Warnings == nil || w.Controls == nil {
		return Result{}, fmt.Errorf("a record without its warnings or controls list")
	}
	return Result{
		Test: w.Test, X: w.X, Y: w.Y, Group: w.Group, Measure: w.Measure, N: w.N, NDropped: w.NDropped,
		Estimate: float64(w.Estimate), Alternative: w.Alternative, PValue: float64(w.PValue), PMethod: w.PMethod,
		CILow: float64(w.CILow), CIHigh: float64(w.CIHigh), CILevel: float64(w.CILevel), CIMethod: w.CIMethod,
		PAdjusted: float64(w.PAdjusted), AdjustMethod: w.AdjustMethod, TiesX: float64(w.TiesX), TiesY: float64(w.TiesY),
		Warnings: w.Warnings, Controls: w.Controls, pFamily: float64(w.PFamily),
	}, nil
}

// exact is a float64 that JSON carries without loss: a finite value as the
// shortest decimal that reads back to the same bits (strconv, 'g', -1;
// -0 as -0), NaN and the infinities as the strings "NaN", "+Inf", "-Inf".
type exact float64

// MarshalJSON writes x as described on exact.
func (x exact) MarshalJSON() ([]byte, error) {
	f := float64(x)
	switch {
	case math.IsNaN(f):
		return []byte(`"NaN"`), nil
	case math.IsInf(f, 1):
		return []byte(`"+Inf"`), nil
	case math.IsInf(f, -1):
		return []byte(`"-Inf"`), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// UnmarshalJSON reads what MarshalJSON writes.
func (x *exact) UnmarshalJSON(b []byte) error {
	if len(b) > 0 && b[0] == '"' {
		var s string
		if err := json.Unmarshal(b, &s); err != nil {
			return err
		}
		switch s {
		case "NaN":
			*x = exact(math.NaN())
		case "+Inf":
			*x = exact(math.Inf(1))
		case "-Inf":
			*x = exact(math.Inf(-1))
		default:
			return fmt.Errorf("%q is not a number", s)
		}
		return nil
	}
	f, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return fmt.Errorf("%s is not a number", b)
	}
	*x = exact(f)
	return nil
}
