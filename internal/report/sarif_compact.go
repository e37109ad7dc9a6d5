package report

import (
	"bytes"
	"encoding/json"
	"fmt"
)

// The SARIF library writes every array, empty or not, and -1 for every index, offset and
// rank not set, the value SARIF 2.1.0 gives "unset"; an absent array reads as an empty
// one. compactSARIF drops both, keeping key order, so the log holds only what was set.
// "results" stays even when empty: SARIF reads it as "found nothing", its absence as "did
// not run". Property bags are scangate's own values and are left alone.

// jsonNode is a decoded JSON value that keeps its object members in order.
type jsonNode struct {
	object, array bool
	keys          []string    // object member names
	items         []*jsonNode // object member values or array elements
	scalar        []byte      // string, number, true, false, null: as encoded
}

func compactSARIF(data []byte) ([]byte, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	root, err := decodeNode(dec)
	if err != nil {
		return nil, fmt.Errorf("sarif: %w", err)
	}
	root.prune()
	var compact, out bytes.Buffer
	root.encode(&compact)
	if err := json.Indent(&out, compact.Bytes(), "", "  "); err != nil {
		return nil, err
	}
	out.WriteString("\n")
	return out.Bytes(), nil
}

func decodeNode(dec *json.Decoder) (*jsonNode, error) {
	tok, err := dec.Token()
	if err != nil {
		return nil, err
	}
	delim, ok := tok.(json.Delim)
	if !ok {
		raw, err := json.Marshal(tok)
		return &jsonNode{scalar: raw}, err
	}
	n := &jsonNode{object: delim == '{', array: delim == '['}
	for dec.More() {
		if n.object {
			key, err := dec.Token()
			if err != nil {
				return nil, err
			}
			n.keys = append(n.keys, key.(string))
		}
		item, err := decodeNode(dec)
		if err != nil {
			return nil, err
		}
		n.items = append(n.items, item)
	}
	_, err = dec.Token() // the closing delimiter
	return n, err
}

// prune drops, below n, empty arrays and -1 values, except "results" and property bags.
func (n *jsonNode) prune() {
	if n.array {
		for _, item := range n.items {
			item.prune()
		}
		return
	}
	keys, items := n.keys[:0], n.items[:0]
	for i, item := range n.items {
		key := n.keys[i]
		if key != "properties" {
			item.prune()
		}
		if key != "results" && (item.array && len(item.items) == 0 || string(item.scalar) == "-1") {
			continue
		}
		keys, items = append(keys, key), append(items, item)
	}
	n.keys, n.items = keys, items
}

func (n *jsonNode) encode(b *bytes.Buffer) {
	switch {
	case n.object:
		b.WriteByte('{')
		for i, item := range n.items {
			if i > 0 {
				b.WriteByte(',')
			}
			key, _ := json.Marshal(n.keys[i])
			b.Write(key)
			b.WriteByte(':')
			item.encode(b)
		}
		b.WriteByte('}')
	case n.array:
		b.WriteByte('[')
		for i, item := range n.items {
			if i > 0 {
				b.WriteByte(',')
			}
			item.encode(b)
		}
		b.WriteByte(']')
	default:
		b.Write(n.scalar)
	}
}
