package report

import (
	"bytes"
	"encoding/json"
	"slices"
	"testing"

	"github.com/scangate/scangate/internal/escape"
)

type streamInner struct {
	Name  string   `json:"name"`
	Ratio *float64 `json:"ratio,omitempty"`
	Tags  []string `json:"tags"`
}

type streamOuter struct {
	Version int                  `json:"version"`
	Note    string               `json:"note,omitempty"`
	Items   jsonSeq[streamInner] `json:"items"`
	None    jsonSeq[int]         `json:"none"`
	Nested  struct {
		Deep jsonSeq[map[string]int] `json:"deep"`
	} `json:"nested"`
	Last bool `json:"last"`
}

type sliceOuter struct {
	Version int           `json:"version"`
	Note    string        `json:"note,omitempty"`
	Items   []streamInner `json:"items"`
	None    []int         `json:"none"`
	Nested  struct {
		Deep []map[string]int `json:"deep"`
	} `json:"nested"`
	Last bool `json:"last"`
}

// The streamed writer's bytes are encoding/json's (indented by two spaces, HTML left
// alone) for the same values held in slices, then escape.JSON: the standard library is
// the reference.
func TestStreamedJSONIsEncodingJSON(t *testing.T) {
	half := 0.5
	items := []streamInner{
		{Name: "a<b>&c", Ratio: &half, Tags: []string{"x"}},
		{Name: "zero\u200bwidth ##[cmd]", Tags: nil},
		{Name: "", Tags: []string{}},
	}
	deep := []map[string]int{{"b": 2, "a": 1}, {}}
	for _, n := range []int{0, 1, len(items)} {
		s := streamOuter{Version: 1, Items: seqOf(items[:n], func(i streamInner) streamInner { return i }), Last: true}
		s.Nested.Deep = jsonSeq[map[string]int](slices.Values(deep[:min(n, len(deep))]))
		want := sliceOuter{Version: 1, Items: items[:n], None: []int{}, Last: true}
		want.Nested.Deep = deep[:min(n, len(deep))]
		var got bytes.Buffer
		if err := encodeJSON(&got, s); err != nil {
			t.Fatal(err)
		}
		var ref bytes.Buffer
		enc := json.NewEncoder(&ref)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(want); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), escape.JSON(ref.Bytes())) {
			t.Errorf("%d items: streamed\n%s\nencoding/json\n%s", n, got.Bytes(), escape.JSON(ref.Bytes()))
		}
	}
}
