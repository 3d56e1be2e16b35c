import json, re, sys, collections
CL = set("floor wall ceiling door window stairs rug table chair sofa bed cabinet shelf counter desk sink fridge stove microwave tv lamp mug plate bowl bottle vase book laptop remote box bag shoe clothes pillow blanket plant toy towel person dog cat".split())
ROOMS = set("kitchen living_room bedroom bathroom hallway office dining_room".split())
RELS = set("on under above below next_to left_of right_of in_front_of behind inside between".split())
REG = set("left right top bottom centre corner".split())
STY = {"typed_tidy","speech","asr_slip","field_note","hard","not_a_correction"}
KINDS = {"question","request","thanks","chit_chat","unparsed","empty"}
COLS = set("red blue green yellow black white grey brown orange pink purple".split())
def cls(x):
    m = re.fullmatch(r"([a-z_]+)\*?", x); assert m and m.group(1) in CL, x
def ref(x):
    if x in ('@', '^'): return  # '^': the previous referent
    cls(x)
def check(c):
    c = c.strip()
    m = re.fullmatch(r"(present|absent)\((\w+)\)", c)
    if m: return cls(m.group(2))
    m = re.fullmatch(r"count\((\w+), (=|>=|<=)(\d+)\)", c)
    if m: cls(m.group(1)); assert 0 <= int(m.group(3)) <= 12; return
    m = re.fullmatch(r"rel\(([@^\w*]+), (!?)(\w+), ([\w]+)(?:, (\w+))?\)", c)
    if m:
        ref(m.group(1)); assert m.group(3) in RELS, c; cls(m.group(4))
        assert (m.group(3) == 'between') == (m.group(5) is not None), c
        if m.group(5): cls(m.group(5))
        return
    m = re.fullmatch(r"place\(([@^\w*]+), (room:)?(\w+)\)", c)
    if m:
        ref(m.group(1)); assert (m.group(3) in ROOMS) if m.group(2) else (m.group(3) in REG), c; return
    m = re.fullmatch(r"attr\(([\^\w]+), (\w+)\)", c)
    if m: ref(m.group(1)); assert m.group(2) in COLS, c; return
    m = re.fullmatch(r"room\((\w+)\)", c)
    if m: assert m.group(1) in ROOMS, c; return
    m = re.fullmatch(r"relabel\([@^], (?:(\w+) )?->(?: (\w+))? ?\)", c)
    if m:
        assert m.group(1) or m.group(2), c
        for g in m.groups():
            if g: cls(g)
        assert m.group(1) != m.group(2), c
        return
    raise AssertionError("bad constraint: " + c)
cnt = collections.Counter(); us = collections.Counter()
for fn in sys.argv[1:]:
    for i, line in enumerate(open(fn), 1):
        r = json.loads(line)
        assert set(r) <= {"c","u","e","k","f"} and {"c","u","e"} <= set(r), (fn, i, r)
        assert r["c"] in STY and isinstance(r["u"], str) and isinstance(r["e"], str), (fn, i)
        if "k" in r: assert r["k"] in KINDS and r["e"] == "", (fn, i)
        if r["c"] == "not_a_correction": assert "k" in r, (fn, i)
        else: assert "k" not in r and r["e"], (fn, i)
        if r["k"] == "empty" if "k" in r else False: assert not r["u"].strip()
        if "f" in r: assert re.fullmatch(r"pixel:(\d+),(\d+)", r["f"]) and int(r["f"].split(':')[1].split(',')[0]) < 640 and int(r["f"].split(',')[1]) < 480
        if '@' in r["e"]: assert "f" in r, (fn, i, r)
        if r["e"]:
            for c in r["e"].split("; "): check(c)
        # no two counts for one class
        cc = re.findall(r"count\((\w+),", r["e"]); assert len(cc) == len(set(cc)), r
        cnt[(fn.split('/')[-1], r["c"])] += 1
        if r["u"].strip(): us[r["u"].lower()] += 1
dup = [u for u, n in us.items() if n > 1]
print("duplicates:", dup[:5], len(dup))
for k in sorted(cnt): print(k, cnt[k])
print("total", sum(cnt.values()))
