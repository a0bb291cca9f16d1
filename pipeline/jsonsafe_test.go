package pipeline

import (
	"encoding/json"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

type safeHead struct {
	Tool string `json:"tool"`
	Seed uint64 `json:"seed"`
}

type safeReport struct {
	safeHead
	Name     string             `json:"name"`
	Median   float64            `json:"median"`
	Quantile []float64          `json:"quantiles"`
	Skip     string             `json:"-"`
	Empty    []int              `json:"empty,omitempty"`
	Zero     float64            `json:"zero,omitempty"`
	Nested   *safeHead          `json:"nested"`
	NilPtr   *safeHead          `json:"nil_ptr"`
	ByName   map[string]float64 `json:"by_name"`
	Raw      []byte             `json:"raw"`
	Ages     AgeMedians         `json:"ages"`
	NoTag    int
	unexp    int
}

// Without NaN, JSONSafe writes exactly what encoding/json writes (the
// reference is encoding/json itself): same bytes, same key order.
func TestJSONSafeIsEncodingJSONWithoutNaN(t *testing.T) {
	r := safeReport{safeHead: safeHead{"spinpop", 7}, Name: "a<b>", Median: 0.1 + 0.2, Quantile: []float64{1e-300, 3, 1e21},
		Skip: "x", Nested: &safeHead{"n", 1}, ByName: map[string]float64{"b": 2, "a": 1}, Raw: []byte("hi"),
		Ages: AgeMedians{1.5, 2.5}, NoTag: 3, unexp: 4}
	want, err := json.MarshalIndent(r, "", "  ")
	require.NoError(t, err)
	got, err := json.MarshalIndent(JSONSafe(r), "", "  ")
	require.NoError(t, err)
	assert.Equal(t, string(want), string(got))
}

func TestJSONSafeWritesNaNAsNull(t *testing.T) {
	r := safeReport{Median: math.NaN(), Quantile: []float64{1, math.Inf(1)}, ByName: map[string]float64{"x": math.NaN()},
		Ages: AgeMedians{math.NaN(), 2}}
	_, err := json.Marshal(r)
	require.Error(t, err, "encoding/json cannot write NaN: the reason JSONSafe exists")
	b, err := json.Marshal(JSONSafe(r))
	require.NoError(t, err)
	var back map[string]any
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Nil(t, back["median"])
	assert.Equal(t, []any{1.0, nil}, back["quantiles"])
	assert.Equal(t, map[string]any{"x": nil}, back["by_name"])
	assert.Equal(t, map[string]any{"generated_dwarfs": nil, "catalog": 2.0}, back["ages"])
	m := map[string]any{"p": math.NaN(), "list": []any{math.NaN(), "s"}}
	b, err = json.Marshal(JSONSafe(m))
	require.NoError(t, err)
	assert.JSONEq(t, `{"p": null, "list": [null, "s"]}`, string(b))
}
