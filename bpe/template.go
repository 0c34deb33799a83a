package bpe

import (
	"encoding/json"
	"fmt"
)

type postSpec struct {
	Type   string `json:"type"`
	Single []struct {
		SpecialToken *struct {
			ID string `json:"id"`
		} `json:"SpecialToken"`
		Sequence *struct {
			ID string `json:"id"`
		} `json:"Sequence"`
	} `json:"single"`
	SpecialTokens map[string]struct {
		IDs []int `json:"ids"`
	} `json:"special_tokens"`
	Sep        []json.RawMessage `json:"sep"`
	Cls        []json.RawMessage `json:"cls"`
	Processors []json.RawMessage `json:"processors"`
}

// compileTemplate returns the ids that the post-processor raw adds to a
// single sequence, in order.
func compileTemplate(file string, raw json.RawMessage, v *Vocab, spell [][]byte) ([]int, error) {
	return templateOf(file, "post_processor", raw, v)
}

func templateOf(file, where string, raw json.RawMessage, v *Vocab) ([]int, error) {
	if raw == nil || string(raw) == "null" {
		return nil, nil
	}
	var sp postSpec
	if err := json.Unmarshal(raw, &sp); err != nil {
		return nil, &posError{file, 0, fmt.Sprintf("%s: %v", where, err)}
	}
	where = fmt.Sprintf("%s %s", where, sp.Type)
	checkID := func(id int) error {
		if id < 0 || id >= len(v.tokens) || v.tokens[id] == nil {
			return &posError{file, 0, fmt.Sprintf("%s: id %d is not in the vocabulary", where, id)}
		}
		return nil
	}
	switch sp.Type {
	case "ByteLevel":
		return nil, nil
	case "TemplateProcessing":
		var ids []int
		for i, item := range sp.Single {
			switch {
			case item.SpecialToken != nil:
				st, ok := sp.SpecialTokens[item.SpecialToken.ID]
				if !ok || len(st.IDs) == 0 {
					return nil, &posError{file, 0, fmt.Sprintf("%s: single[%d] names %q, which special_tokens does not define", where, i, item.SpecialToken.ID)}
				}
				for _, id := range st.IDs {
					if err := checkID(id); err != nil {
						return nil, err
					}
				}
				ids = append(ids, st.IDs...)
			case item.Sequence != nil:
			default:
				return nil, &posError{file, 0, fmt.Sprintf("%s: single[%d] is neither a SpecialToken nor a Sequence", where, i)}
			}
		}
		return ids, nil
	case "BertProcessing", "RobertaProcessing":
		var ids []int
		for _, pair := range [][]json.RawMessage{sp.Cls, sp.Sep} {
			var id int
			if len(pair) != 2 || json.Unmarshal(pair[1], &id) != nil {
				return nil, &posError{file, 0, where + ": cls and sep must be [token, id]"}
			}
			if err := checkID(id); err != nil {
				return nil, err
			}
			ids = append(ids, id)
		}
		return ids, nil
	case "Sequence":
		var ids []int
		for i, r := range sp.Processors {
			more, err := templateOf(file, fmt.Sprintf("%s[%d]", where, i), r, v)
			if err != nil {
				return nil, err
			}
			ids = append(ids, more...)
		}
		return ids, nil
	}
	return nil, &posError{file, 0, fmt.Sprintf("%s: post-processor type %q is not implemented", where, sp.Type)}
}
