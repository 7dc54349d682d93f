package parse

import "bytes"

// ocScan is the one-pass reader of OpenConfig documents of the regular exported shape (as
// docs/formats.md shows it and exporters write it): it walks a document's bytes once, without
// building its node tree, and takes the leaves into jp.oc as ocFromTree would. It reads only
// what it can read exactly as the tree reader does; on anything else it gives up (ok false)
// having changed nothing but its own caches, and the document is read by the tree reader,
// which then gives the records, rejections and errors. It gives up on:
//   - a member of the document other than components, terminal-device, timestamp and time
//     (so a canonical record is handed over after its first members);
//   - two members of one object that the reader would take for the same name (duplicates,
//     with or without module prefix), both timestamp and time, a null where an object or a
//     key is read;
//   - lists written as objects keyed by their keys, list entries that are not objects, a list
//     entry without its own name or index;
//   - escapes and non-ASCII bytes in member names and in the strings it reads, escapes in the
//     strings it skips, nesting deeper than ocScanDepth in what it skips;
//   - any syntax error, and any value of a type it does not expect.
type ocScan struct {
	data  []byte
	stat  string
	oc    *ocDoc
	depth int
	// the member names of each kind of object it reads (see keyCache)
	root, comps, comp, och, ochState, td, lcs, lchan, otn, otnState, lcas, assign, assignSrc keyCache
}

// ocScanDepth bounds the nesting of the values ocScan skips (far below maxJSONDepth: deeper
// documents are the tree reader's).
const ocScanDepth = 64

// ocOnePass reads the document at data[i] (no leading white space) into jp.oc; end is the
// offset just after it.
func (jp *jsonParser) ocOnePass(data []byte, i int) (end int, ok bool) {
	oc := &jp.oc
	oc.comps, oc.chans = oc.comps[:0], oc.chans[:0]
	s := &jp.scan
	if s.root.names == nil {
		s.init()
	}
	s.data, s.stat, s.oc, s.depth = data, jp.stat, oc, 0
	end, ok = s.document(i)
	s.data = nil
	return end, ok
}

func (s *ocScan) init() {
	leafNames := func(set *ocLeafSet, more ...string) []string {
		var n []string
		for _, l := range set.leaves {
			n = append(n, l.name)
		}
		return append(n, more...)
	}
	s.root.names = []string{"components", "terminal-device", "timestamp", "time"}
	s.comps.names = []string{"component"}
	s.comp.names = []string{"name", "optical-channel", "fec-uncorrectable-blocks"}
	s.och.names = []string{"state"}
	s.ochState.names = leafNames(ocStateSet, "logical-channel-assignment")
	s.td.names = []string{"logical-channels"}
	s.lcs.names = []string{"channel"}
	s.lchan.names = []string{"index", "otn", "logical-channel-assignments"}
	s.otn.names = []string{"state"}
	s.otnState.names = leafNames(ocFECSet)
	s.lcas.names = []string{"assignment"}
	s.assign.names = []string{"state", "config"}
	s.assignSrc.names = []string{"assignment-type", "optical-channel"}
}

// keyCache is what ocScan knows of one kind of object: the member names it reads (base names,
// without module prefix), and the name met at each position of the last object of the kind.
// Exports write the members of every object of a kind in the same order, so a name is most
// often recognised by comparing its bytes with the one at its position last time, without
// scanning it or looking it up.
type keyCache struct {
	names []string // a member's id is the index of its base name here, -1 when not there
	slots []ocKeySlot
}

// ocKeySlot is a member name as written, quotes included, and its id.
type ocKeySlot struct {
	raw []byte
	id  int
}

// maxKeySlots bounds the positions a keyCache remembers.
const maxKeySlots = 32

func (kc *keyCache) id(k []byte) int {
	base := baseName(k)
	for i, n := range kc.names {
		if string(base) == n {
			return i
		}
	}
	return -1
}

// strSkip marks the bytes a skipped string can hold as they are: strPlain and the bytes ≥ 0x80
// (the tree reader accepts them, invalid UTF-8 included, as encoding/json does).
var strSkip = func() (t [256]bool) {
	t = strPlain
	for c := 0x80; c < 0x100; c++ {
		t[c] = true
	}
	return t
}()

// str reads the string at data[i] ('"'), which must hold only strPlain bytes; j is the offset
// after its closing quote.
func (s *ocScan) str(i int) (b []byte, j int, ok bool) {
	data := s.data
	j = plainRun(data, i+1, false)
	if j >= len(data) || data[j] != '"' {
		return nil, j, false
	}
	return data[i+1 : j], j + 1, true
}

// plainRun is the offset of the first byte from i on that is not strPlain (or, with high, not
// strSkip), len(data) when there is none.
func plainRun(data []byte, i int, high bool) int {
	t := &strPlain
	if high {
		t = &strSkip
	}
	for i < len(data) && t[data[i]] {
		i++
	}
	return i
}

// key reads the member name at data[i], the p-th of an object of kind kc (nil: a value being
// skipped): its text, its id (-1: a name kc does not read) and the offset after it.
func (s *ocScan) key(i int, kc *keyCache, p int) (k []byte, id, j int, ok bool) {
	data := s.data
	if kc != nil && p < len(kc.slots) {
		sl := &kc.slots[p]
		if n := len(sl.raw); n > 0 && len(data)-i >= n && string(data[i:i+n]) == string(sl.raw) {
			return data[i+1 : i+n-1], sl.id, i + n, true
		}
	}
	if i >= len(data) || data[i] != '"' {
		return nil, -1, i, false
	}
	k, j, ok = s.str(i)
	if !ok || kc == nil {
		return k, -1, j, ok
	}
	id = kc.id(k)
	if p < maxKeySlots {
		for len(kc.slots) <= p {
			kc.slots = append(kc.slots, ocKeySlot{})
		}
		kc.slots[p] = ocKeySlot{append(kc.slots[p].raw[:0], data[i:j]...), id}
	}
	return k, id, j, true
}

// object reads the object at data[i] ('{') of kind kc (nil: a value being skipped), calling
// member for each member with its name, its id and the offset of its value; member returns
// the offset after the value. Two members with the same id (the same name, with or without
// module prefix) give up.
func (s *ocScan) object(i int, kc *keyCache, member func(k []byte, id, v int) (int, bool)) (int, bool) {
	data := s.data
	i = skipSpace(data, i+1)
	if i < len(data) && data[i] == '}' {
		return i + 1, true
	}
	var seen uint64
	for p := 0; ; p++ {
		k, id, j, ok := s.key(i, kc, p)
		if !ok {
			return j, false
		}
		if id >= 0 {
			if seen&(1<<id) != 0 {
				return j, false
			}
			seen |= 1 << id
		}
		j = skipSpace(data, j)
		if j >= len(data) || data[j] != ':' {
			return j, false
		}
		j = skipSpace(data, j+1)
		if j >= len(data) {
			return j, false
		}
		if j, ok = member(k, id, j); !ok {
			return j, false
		}
		j = skipSpace(data, j)
		if j >= len(data) {
			return j, false
		}
		switch data[j] {
		case ',':
			i = skipSpace(data, j+1)
		case '}':
			return j + 1, true
		default:
			return j, false
		}
	}
}

// array reads the array at data[i] ('['), calling elem with the offset of each element, which
// returns the offset after it.
func (s *ocScan) array(i int, elem func(v int) (int, bool)) (int, bool) {
	data := s.data
	i = skipSpace(data, i+1)
	if i < len(data) && data[i] == ']' {
		return i + 1, true
	}
	for {
		if i >= len(data) {
			return i, false
		}
		j, ok := elem(i)
		if !ok {
			return j, false
		}
		j = skipSpace(data, j)
		if j >= len(data) {
			return j, false
		}
		switch data[j] {
		case ',':
			i = skipSpace(data, j+1)
		case ']':
			return j + 1, true
		default:
			return j, false
		}
	}
}

// objects reads the array of objects at data[i] ('['), calling entry for each.
func (s *ocScan) objects(i int, entry func(v int) (int, bool)) (int, bool) {
	return s.array(i, func(v int) (int, bool) {
		if s.data[v] != '{' {
			return v, false
		}
		return entry(v)
	})
}

// skip reads over the value at data[i] (i < len(data)).
func (s *ocScan) skip(i int) (int, bool) {
	data := s.data
	switch c := data[i]; {
	case c == '"':
		j := plainRun(data, i+1, true)
		if j >= len(data) || data[j] != '"' {
			return j, false
		}
		return j + 1, true
	case c == '{' || c == '[':
		if s.depth++; s.depth > ocScanDepth {
			return i, false
		}
		var j int
		var ok bool
		if c == '{' {
			j, ok = s.object(i, nil, func(_ []byte, _, v int) (int, bool) { return s.skip(v) })
		} else {
			j, ok = s.array(i, s.skip)
		}
		s.depth--
		return j, ok
	case c == '-' || (c >= '0' && c <= '9'):
		return scanNumber(data, i)
	case c == 't':
		return s.literal(i, "true")
	case c == 'f':
		return s.literal(i, "false")
	case c == 'n':
		return s.literal(i, "null")
	}
	return i, false
}

func (s *ocScan) literal(i int, lit string) (int, bool) {
	if len(s.data)-i >= len(lit) && string(s.data[i:i+len(lit)]) == lit {
		return i + len(lit), true
	}
	return i, false
}

// scalar reads the value at data[i] as jdoc.scalar takes it: a string's trimmed text or a
// number's or a boolean's literal; null is no value (set false). It gives up on objects and
// arrays.
func (s *ocScan) scalar(i int) (v ocVal, j int, ok bool) {
	data := s.data
	switch c := data[i]; {
	case c == '"':
		b, j, ok := s.str(i)
		if !ok {
			return v, j, false
		}
		b = bytes.TrimSpace(b)
		return ocVal{b: b, set: true, missing: isMissing(b)}, j, true
	case c == '-' || (c >= '0' && c <= '9'):
		j, ok := scanNumber(data, i)
		return ocVal{b: data[i:j], set: true}, j, ok
	case c == 't':
		j, ok := s.literal(i, "true")
		return ocVal{b: data[i:j], set: true}, j, ok
	case c == 'f':
		j, ok := s.literal(i, "false")
		return ocVal{b: data[i:j], set: true}, j, ok
	case c == 'n':
		j, ok := s.literal(i, "null")
		return v, j, ok
	}
	return v, i, false
}

// leaf reads a leaf's value at data[i]: its chosen statistic out of an instant/avg/min/max
// container (jdoc.statValue), or a plain value as it is; present says that the value is not
// null (whether or not the container has the statistic).
func (s *ocScan) leaf(i int) (v ocVal, present bool, j int, ok bool) {
	data := s.data
	if data[i] != '{' {
		v, j, ok = s.scalar(i)
		return v, v.set, j, ok
	}
	// The common {"instant":X}: X whatever the statistic asked for (it falls back to instant).
	const inst = `{"instant":`
	if len(data)-i > len(inst) && string(data[i:i+len(inst)]) == inst {
		if v, j, ok = s.scalar(i + len(inst)); ok && j < len(data) && data[j] == '}' {
			return v, true, j + 1, true
		}
	}
	// The statistics are read by their exact names (jdoc.field).
	var chosen, instant ocVal
	var seenStat, seenInstant bool
	j, ok = s.object(i, nil, func(k []byte, _, at int) (int, bool) {
		var x *ocVal
		switch {
		case string(k) == s.stat:
			if seenStat {
				return at, false
			}
			seenStat, x = true, &chosen
		case string(k) == "instant":
			if seenInstant {
				return at, false
			}
			seenInstant, x = true, &instant
		default:
			return s.skip(at)
		}
		var j int
		var ok bool
		*x, j, ok = s.scalar(at)
		return j, ok
	})
	if !chosen.set {
		chosen = instant
	}
	return chosen, true, j, ok
}

// leaves reads the object at data[i] of kind kc, whose first ids are the leaves of a leaf set,
// into out (len(out) of them, cleared first); other, when not nil, is called for the other
// members with their ids. some says whether a leaf is present (not null).
func (s *ocScan) leaves(i int, kc *keyCache, out []ocVal, other func(id, v int) (int, bool)) (j int, some, ok bool) {
	clear(out)
	j, ok = s.object(i, kc, func(_ []byte, id, at int) (int, bool) {
		if id < 0 || id >= len(out) {
			if other != nil {
				return other(id, at)
			}
			return s.skip(at)
		}
		v, present, j, ok := s.leaf(at)
		out[id] = v
		some = some || present
		return j, ok
	})
	return j, some, ok
}

// document reads the document at data[i].
func (s *ocScan) document(i int) (int, bool) {
	data := s.data
	if i >= len(data) || data[i] != '{' {
		return i, false
	}
	oc := s.oc
	haveTime, haveData := false, false
	j, ok := s.object(i, &s.root, func(k []byte, id, v int) (int, bool) {
		switch id {
		case 0: // components
			if data[v] != '{' {
				return v, false
			}
			haveData = true
			return s.object(v, &s.comps, func(_ []byte, id, v int) (int, bool) {
				if id != 0 { // not component
					return s.skip(v)
				}
				if data[v] != '[' {
					return v, false
				}
				return s.objects(v, s.component)
			})
		case 1: // terminal-device
			if data[v] != '{' {
				return v, false
			}
			haveData = true
			return s.object(v, &s.td, func(_ []byte, id, v int) (int, bool) {
				if id != 0 { // not logical-channels
					return s.skip(v)
				}
				if data[v] != '{' {
					return v, false
				}
				return s.object(v, &s.lcs, func(_ []byte, id, v int) (int, bool) {
					if id != 0 { // not channel
						return s.skip(v)
					}
					if data[v] != '[' {
						return v, false
					}
					return s.objects(v, s.channel)
				})
			})
		case 2, 3: // timestamp, time
			if haveTime {
				return v, false
			}
			haveTime = true
			t, j, ok := s.scalar(v)
			if !t.set {
				return j, false
			}
			oc.tb, oc.tMissing, oc.tname = t.b, t.missing, s.root.names[id]
			return j, ok
		}
		return v, false
	})
	if !ok || !haveData {
		return j, false
	}
	if !haveTime {
		oc.tb, oc.tMissing = nil, true
	}
	return j, true
}

// component reads one entry of the component list at data[i] ('{').
func (s *ocScan) component(i int) (int, bool) {
	data := s.data
	oc := s.oc
	oc.comps = append(oc.comps, ocComponent{})
	c := &oc.comps[len(oc.comps)-1]
	haveName, haveOCh := false, false
	j, ok := s.object(i, &s.comp, func(_ []byte, id, v int) (int, bool) {
		switch id {
		case 0: // name
			name, j, ok := s.scalar(v)
			if !name.set || name.missing {
				return j, false
			}
			c.key, haveName = name.b, true
			return j, ok
		case 1: // optical-channel
			if data[v] != '{' {
				return v, false
			}
			haveOCh = true
			return s.object(v, &s.och, func(_ []byte, id, v int) (int, bool) {
				if id != 0 { // not state
					return s.skip(v)
				}
				if data[v] != '{' {
					return v, false
				}
				j, _, ok := s.leaves(v, &s.ochState, c.state[:], func(id, v int) (int, bool) {
					if id != nOCState { // not logical-channel-assignment
						return s.skip(v)
					}
					lc, j, ok := s.scalar(v)
					c.lc, c.lcSet = lc.b, lc.set && !lc.missing
					return j, ok
				})
				return j, ok
			})
		case 2: // fec-uncorrectable-blocks
			val, _, j, ok := s.leaf(v)
			c.own[0] = val
			return j, ok
		}
		return s.skip(v)
	})
	if !ok || !haveName {
		return j, false
	}
	if !haveOCh { // not an optical channel
		oc.comps = oc.comps[:len(oc.comps)-1]
	}
	return j, true
}

// channel reads one entry of the logical channel list at data[i] ('{').
func (s *ocScan) channel(i int) (int, bool) {
	data := s.data
	oc := s.oc
	oc.chans = append(oc.chans, ocChannel{})
	ch := &oc.chans[len(oc.chans)-1]
	haveIndex, haveState := false, false
	j, ok := s.object(i, &s.lchan, func(_ []byte, id, v int) (int, bool) {
		switch id {
		case 0: // index
			index, j, ok := s.scalar(v)
			if !index.set || index.missing {
				return j, false
			}
			ch.key, haveIndex = index.b, true
			return j, ok
		case 1: // otn
			if data[v] != '{' {
				return v, false
			}
			return s.object(v, &s.otn, func(_ []byte, id, v int) (int, bool) {
				if id != 0 { // not state
					return s.skip(v)
				}
				if data[v] != '{' {
					return v, false
				}
				haveState = true
				j, some, ok := s.leaves(v, &s.otnState, ch.fec[:], nil)
				ch.hasData = some
				return j, ok
			})
		case 2: // logical-channel-assignments
			if data[v] != '{' {
				return v, false
			}
			return s.object(v, &s.lcas, func(_ []byte, id, v int) (int, bool) {
				if id != 0 { // not assignment
					return s.skip(v)
				}
				if data[v] != '[' {
					return v, false
				}
				return s.objects(v, func(v int) (int, bool) { return s.assignment(v, ch) })
			})
		}
		return s.skip(v)
	})
	if !ok || !haveIndex {
		return j, false
	}
	if !haveState { // no OTN state: not read
		oc.chans = oc.chans[:len(oc.chans)-1]
	}
	return j, true
}

// assignment reads one entry of a logical channel's assignment list at data[i] ('{'): its
// state, then its config, may name the channel's port (see ocFromTree).
func (s *ocScan) assignment(i int, ch *ocChannel) (int, bool) {
	data := s.data
	var src [2]struct{ at, och []byte }
	j, ok := s.object(i, &s.assign, func(_ []byte, n, v int) (int, bool) {
		if n < 0 { // neither state nor config
			return s.skip(v)
		}
		if data[v] != '{' {
			return v, false
		}
		return s.object(v, &s.assignSrc, func(_ []byte, id, v int) (int, bool) {
			switch id {
			case 0: // assignment-type
				if data[v] == '"' {
					at, j, ok := s.str(v)
					src[n].at = at
					return j, ok
				}
				return s.skip(v)
			case 1: // optical-channel
				och, j, ok := s.scalar(v)
				if och.set && !och.missing {
					src[n].och = och.b
				}
				return j, ok
			}
			return s.skip(v)
		})
	})
	if !ok {
		return j, false
	}
	for _, x := range src {
		if x.och != nil {
			ch.port = assignedPort(ch.port, x.at, x.och)
		}
	}
	return j, true
}
