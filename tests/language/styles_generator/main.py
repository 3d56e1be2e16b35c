from nac import *
import json, re

def typed():
    nf = ch([1,1,1,1,2,2,3])
    parts, es, ptr = [], [], False
    used = set(); usedl = set()
    for i in range(nf):
        F = fact()
        if F['k'] in ('relabel','relabel_to','relabel_not','ptr_rel') and (ptr or i > 0): continue
        if F['k'] == 'room' and i > 0: continue
        if not compatible(F, used, usedl): continue
        ms, ml = mentions(F); used |= ms; usedl |= ml
        s, p = tidy(F)
        ptr = ptr or p
        parts.append(cap(s) + ('.' if R.random() < 0.85 or len(parts) < nf-1 else ''))
        es += expect(F)
    return ' '.join(parts), es, ptr

GEN = {'typed_tidy': typed, 'speech': speech, 'asr_slip': asr, 'field_note': field, 'hard': hard, 'not_a_correction': nac}
N = 250
dev, held = [], []
seen = set()
per = {}
for c, g in GEN.items():
    rows = []
    while len(rows) < N:
        out = g()
        if c == 'not_a_correction':
            u, e, p, k = out
        else:
            (u, e, p), k = out, None
        u = u.replace('on top of the floor', 'on the floor')
        key = re.sub(r"\W+", " ", u.lower()).strip()
        if key in seen and k != 'empty': continue
        if k == 'empty' and sum(1 for r in rows if r.get('k') == 'empty') >= 4: continue
        seen.add(key)
        # drop exact duplicate constraints
        ee = []
        for x in e:
            if x not in ee: ee.append(x)
        row = {'c': c, 'u': u, 'e': '; '.join(ee)}
        if k: row['k'] = k
        if p: row['f'] = px()
        rows.append(row)
    per[c] = rows
# per style: lines 1,2 -> dev, 3 -> heldout
dev_s = {c: [r for i, r in enumerate(rows) if i % 3 != 2] for c, rows in per.items()}
held_s = {c: [r for i, r in enumerate(rows) if i % 3 == 2] for c, rows in per.items()}
def interleave(d):
    out = []; m = max(len(v) for v in d.values())
    for i in range(m):
        for c in GEN:
            if i < len(d[c]): out.append(d[c][i])
    return out
import sys
outdir = sys.argv[1] if len(sys.argv) > 1 else '/tmp'
for name, d in (('styles_dev.jsonl', dev_s), ('styles_heldout.jsonl', held_s)):
    with open(outdir + '/' + name, 'w') as f:
        for r in interleave(d): f.write(json.dumps(r, ensure_ascii=False) + '\n')
