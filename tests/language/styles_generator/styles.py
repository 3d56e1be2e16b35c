from real import *
import re, copy

FILL = ['uh','um','uh','um','like','you know','er','erm']
LEADF = ['so','okay so','well','um','uh','like','so um','okay','alright so']
def lowerclean(s):
    s = s.lower()
    s = re.sub(r"[.,;:!?]", "", s)
    return re.sub(r"\s+", " ", s).strip()
def add_fillers(s, n=None):
    w = s.split()
    n = n if n is not None else ch([1,1,2,2,3])
    for _ in range(n):
        idx = [i for i, x in enumerate(w) if x in ('the','a','an','is','are','there','on','in','next','under','behind','between','at','not','inside','underneath','above','below')]
        if not idx or R.random() < 0.15:
            w.insert(0, ch(LEADF)); continue
        i = ch(idx)
        if i > 0 and w[i-1] in FILL + ['so','well','okay']: continue
        w.insert(i, ch(FILL))
    return ' '.join(w)
def stutter(s):
    w = s.split()
    idx = [i for i,x in enumerate(w) if x in ('the','a','is','there','on','in')]
    if idx:
        i = ch(idx); w.insert(i, w[i])
    return ' '.join(w)
REPAIR = ['no wait','sorry','i mean','no no','actually no','uh no','scratch that']

def speech_one(F):
    """Return (utterance, expected list, pointer)"""
    k = F['k']
    r = R.random()
    if k in ('rel_def','rel_neg') and r < 0.45:
        # landmark repair
        s = word(F['s']); rw = relw(F['r']); l0 = F['l']
        while l0 == F['l'] or l0 == F['s']: l0 = pair(F['r'])[1]
        neg = ' not' if k=='rel_neg' else ''
        if R.random()<0.5:
            u = "the %s is%s %s the %s %s %s the %s" % (s, neg, rw, word(l0), ch(REPAIR), rw, word(F['l']))
        else:
            u = "the %s is%s %s the %s %s the %s" % (s, neg, rw, word(l0), ch(REPAIR), word(F['l']))
        return add_fillers(u, ch([0,1,2])), expect(F), False
    if k in ('rel_def','attr','place_region') and r < 0.7:
        # subject repair
        alt = ch([c for c in ['cat','dog','mug','lamp','bowl','chair','box','bag'] if c != F['s']])
        s, p = tidy(F); s = lowerclean(s)
        w = word(F['s'])
        m = re.match(r"^(.*?)the (\S+(?: \S+)?) is (.*)$", s)
        if m and not m.group(1):
            u = "the %s %s the %s is %s" % (word(alt), ch(REPAIR), ' '.join(m.group(2).split()), m.group(3))
            return add_fillers(u, ch([0,1,2])), expect(F), False
    if k in ('count','count_rel') and F['n'] >= 2 and r < 0.5:
        n0 = ch([x for x in range(max(2, F['n']-3), min(12, F['n']+3)+1) if x != F['n']])
        tail = ''
        if k == 'count_rel': tail = ' %s the %s' % (relw(F['r']), word(F['l']))
        u = ch(["there are %s %s %s%s" % (NUMW[n0], ch(REPAIR), NUMW[F['n']], ' '+pword(F['s'])+tail),
                "i see %s %s %s %s%s" % (NUMW[n0], pword(F['s']), ch(REPAIR), NUMW[F['n']], tail)])
        return add_fillers(u, ch([0,1,2])), expect(F), False
    s, p = tidy(F)
    s = lowerclean(s)
    s = re.sub(r"\b(\d+)\b", lambda m: NUMW[int(m.group(1))], s)
    s = s.replace('you have it wrong ', '')
    if R.random() < 0.3: s = stutter(s)
    s = add_fillers(s)
    if R.random() < 0.25: s = ch(['yeah ','okay ','so ','hmm ','alright ']) + s
    if R.random() < 0.15: s = s + ch([' yeah',' okay',' i think',' you know',' alright'])
    return s, expect(F), p

def speech():
    # run-ons of 1-3 facts; pointer only once
    nf = ch([1,1,1,2,2,3])
    us, es, ptr = [], [], False
    used = set(); usedl = set()
    for i in range(nf):
        F = fact()
        if ptr and F['k'] in ('relabel','relabel_to','relabel_not','ptr_rel'): continue
        if i > 0 and F['k'] in ('relabel','relabel_to','relabel_not','ptr_rel','room'): continue
        if not compatible(F, used, usedl): continue
        ms, ml = mentions(F); used |= ms; usedl |= ml
        u, e, p = speech_one(F)
        ptr = ptr or p
        us.append(u); es += e
    joiner = lambda: ch([' and ',' and also ',' and uh ',' oh and ',' and then ',' also ', ' and um '])
    u = us[0]
    for x in us[1:]: u += joiner() + x
    return u, es, ptr

# ---------------- ASR slips ----------------
NUM_SLIP = {'two':['to','too'],'four':['for','fore'],'one':['won'],'eight':['ate']}
WORD_SLIP = [(r"\bright\b", ['write','rite']), (r"\bby\b", ['buy','bye']), (r"\bsink\b", ['sync']), (r"\bsinks\b", ['syncs']),
             (r"\bthere's\b", ["theirs","there's"]), (r"\bthere are\b", ["their are","they're are"]), (r"\bthere is\b", ["their is"]),
             (r"\bno\b", ['know']), (r"\blaptop\b", ['lap top']), (r"\blaptops\b", ['lap tops']), (r"\btelevision\b", ['tele vision','tell a vision']), (r"\btv\b", ['tee vee','t v']),
             (r"\bin front of\b", ['infront of','in front off']), (r"\bbetween\b", ['be tween','between']), (r"\bcupboard\b", ['cup board']), (r"\bbookshelf\b", ['book shelf']),
             (r"\bmicrowave\b", ['micro wave']), (r"\bbedroom\b", ['bed room']), (r"\bsofa\b", ['so far','sofa']), (r"\bcouch\b", ['coach']),
             (r"\bnext to\b", ['next two','next too']), (r"\bbehind\b", ['be hind']), (r"\bwindow\b", ['win doe','window']), (r"\bcounter\b", ['count her','counter']),
             (r"\bworktop\b", ['work top']), (r"\bhallway\b", ['hall way']), (r"\bbowl\b", ['bole','boll']), (r"\bbowls\b", ['boles','bolls']), (r"\bdesk\b", ['disk']),
             (r"\bremote\b", ['re mote']), (r"\bhouseplant\b", ['house plant']), (r"\bbathroom\b", ['bath room']), (r"\bteddy bear\b", ['teddy bare']),
             (r"\bfridge\b", ['fridge','frig']), (r"\bstairs\b", ['stares']), (r"\bwhite\b", ['wight']), (r"\bred\b", ['read']), (r"\bblue\b", ['blew']),
             (r"\bgrey\b", ['gray']), (r"\bpillow\b", ['pill oh']), (r"\bcarpet\b", ['car pet']), (r"\btowel\b", ['tow el']), (r"\btowels\b", ['tow els']),
             (r"\bwe're\b", ['were','weir']), (r"\bit's\b", ['its']), (r"\bthat's\b", ['thats']), (r"\bdoor\b", ['dore']) ]
def asr_slip_text(s):
    s0 = s
    w = s.split(' ')
    slips = 0
    for i, x in enumerate(w):
        if x in NUM_SLIP and R.random() < 0.8:
            w[i] = ch(NUM_SLIP[x]); slips += 1
    s = ' '.join(w)
    opts = list(WORD_SLIP); R.shuffle(opts)
    for pat, rep in opts:
        if re.search(pat, s) and R.random() < 0.45:
            new = re.sub(pat, ch(rep), s, count=1)
            if new != s: slips += 1; s = new
    # dropped articles
    if R.random() < 0.4:
        new = re.sub(r"\bthe ", "", s, count=ch([1,2]))
        if new != s: slips += 1; s = new
    return s, slips

def asr():
    for _ in range(50):
        F = fact()
        if F['k'] in ('count','count_rel','count_cmp') and R.random() < 0.6:
            F['n'] = ch([1,2,2,4,4,8,1,2,4]) if F['n']>1 or F['k']!='count_cmp' else F['n']
            if F['k']=='count_cmp' and F['n'] < 2: F['n'] = 2
            if F['n'] > maxn(F['s']): F['n'] = min(2, maxn(F['s']))
        s, p = tidy(F, syn=0.5)
        s = s.replace('You have it wrong: ', '')
        for d in ('two','four','one','eight'):
            s = re.sub(r"\b%d\b" % {'two':2,'four':4,'one':1,'eight':8}[d], d, s)
        if R.random() < 0.7: s = s.lower()
        s2, n = asr_slip_text(s)
        if n == 0: continue
        if R.random() < 0.6: s2 = re.sub(r"[.,:;]", "", s2)
        elif not s2.endswith(('.', '?')): s2 += '.'
        return s2, expect(F), p
    raise Exception

# ---------------- field notes ----------------
ABR = {'table':['tbl','table','tbl'],'living_room':['liv rm','living rm','lounge'],'dining_room':['dining rm','dining'],'bedroom':['bedrm','bedroom','bed rm'],
       'bathroom':['bathrm','bathroom','bath rm'],'hallway':['hall','hallway'],'office':['office','study'],'kitchen':['kitchen','kit.'],
       'person':['person','ppl'],'cabinet':['cab','cabinet','cupbd'],'counter':['counter','ctr','worktop'],'microwave':['microwave','mw'],'window':['window','wdw'],
       'refrigerator':['fridge']}
def fw(c):
    if c in ABR and c != 'person' and R.random() < 0.5: return ch(ABR[c])
    return word(c, 0.3)
def fpl(c):
    if c == 'person': return ch(['ppl','people','persons'])
    if c == 'table' and R.random()<0.5: return 'tbls'
    return pword(c, 0.3)
FREL = {'on':['on','on','on top of','on'],'under':['under','under','undr'],'inside':['in','in','inside'],'next_to':['next to','nxt to','by','beside'],
        'left_of':['L of','left of','L of','to L of'],'right_of':['R of','right of','R of','to R of'],'in_front_of':['in front of','infront of','front of'],
        'behind':['behind','bhd','behind'],'above':['above','above'],'below':['below','below','blw']}
FREG = {'left':['L','left','L side','left side'],'right':['R','right','R side'],'top':['top','top of pic'],'bottom':['bottom','btm'],'centre':['centre','center','middle','mid'],'corner':['corner','in corner']}
def field_one(F):
    k = F['k']
    if k in ('rel_def',):
        return ch(["%s %s %s", "%s: %s %s", "%s - %s %s"]) % (fw(F['s']), ch(FREL[F['r']]), fw(F['l'])), False
    if k == 'rel_neg':
        return ch(["%s not %s %s", "%s NOT %s %s", "%s: not %s %s"]) % (fw(F['s']), ch(FREL[F['r']]), fw(F['l'])), False
    if k == 'rel_exist':
        return ch(["a %s %s %s", "there's a %s %s %s", "+ %s %s %s", "also a %s %s %s"]) % (fw(F['s']), ch(FREL[F['r']]), fw(F['l'])), False
    if k == 'count_rel':
        n = F['n']; nn = num(n, 0.8)
        if n == 1: return "1 %s %s %s" % (fw(F['s']), ch(FREL[F['r']]), fw(F['l'])), False
        return ch(["%s %s %s %s" % (nn, fpl(F['s']), ch(FREL[F['r']]), fw(F['l'])), "%s %s %s x%d" % (fpl(F['s']), ch(FREL[F['r']]), fw(F['l']), n),
                   "%s w/ %s %s" % (fw(F['l']), nn, fpl(F['s'])) if F['r']=='on' else "%s %s %s %s" % (nn, fpl(F['s']), ch(FREL[F['r']]), fw(F['l']))]), False
    if k == 'count':
        n = F['n']
        if n == 1: return ch(["1 %s", "%s x1", "%s: 1", "only 1 %s"]) % fw(F['s']), False
        return ch(["%s x%d" % (fpl(F['s']), n), "%d %s" % (n, fpl(F['s'])), "%s: %d" % (fpl(F['s']), n), "%s %s" % (NUMW[n], fpl(F['s'])), "%s = %d" % (fpl(F['s']), n), "x%d %s" % (n, fpl(F['s']))]), False
    if k == 'count_cmp':
        n = F['n']; p = fpl(F['s'])
        if F['op'] == '>=': return ch(["%s: at least %d", "%s >= %d", "%s %d+", "at least %d %s"]) % ((p, n) if R.random()<2 else None) if False else ch(["%s: at least %d" % (p, n), "%s >= %d" % (p, n), "%s: %d+" % (p, n), "at least %d %s" % (n, p), "min %d %s" % (n, p)]), False
        if F['op'] == '<=': return ch(["%s: at most %d" % (p, n), "%s <= %d" % (p, n), "max %d %s" % (n, p), "no more than %d %s" % (n, p), "%s: %d max" % (p, n)]), False
        return ch(["%s: fewer than %d" % (p, n), "fewer than %d %s" % (n, p), "%s < %d" % (p, n)]), False
    if k == 'present':
        if F['s'] in ('stairs','clothes'): return ch(["%s present", "%s: yes", "+%s"]) % fw(F['s']), False
        return ch(["%s present", "+%s", "there's a %s", "%s: yes", "%s - missed it", "a %s"]) % fw(F['s']), False
    if k == 'absent':
        return ch(["no %s" % fpl(F['s']), "no %s" % fw(F['s']), "%s: none" % fpl(F['s']), "%s: 0" % fpl(F['s']), "0 %s" % fpl(F['s']), "zero %s" % fpl(F['s'])]), False
    if k == 'place_region':
        return ch(["%s %s", "%s: %s", "%s - %s"]) % (fw(F['s']), ch(FREG[F['g']])), False
    if k == 'place_room':
        return ch(["%s in %s", "%s: %s", "%s in the %s"]) % (fw(F['s']), ch(ABR[F['rm']]) if F['rm'] in ABR else F['rm']), False
    if k == 'room':
        rw = ch(ABR.get(F['rm'], [F['rm']]) + ROOMW[F['rm']])
        return ch(["%s.", "%s", "room: %s", "rm = %s", "%s rm" if F['rm'] in ('kitchen','office') else "%s"]) % rw, False
    if k == 'attr':
        return ch(["%s: %s", "%s %s", "%s = %s", "%s (%s)"]) % ((fw(F['s']), F['a']) if R.random() < 0.75 else (F['a'], fw(F['s']))) if False else ch(["%s: %s" % (fw(F['s']), F['a']), "%s %s" % (F['a'], fw(F['s'])), "%s = %s" % (fw(F['s']), F['a'])]), False
    if k == 'relabel':
        return ch(["%s, not %s" % (fw(F['b']), fw(F['a'])), "this: %s not %s" % (fw(F['b']), fw(F['a'])), "not %s - %s" % (fw(F['a']), fw(F['b'])), "%s -> %s" % (fw(F['a']), fw(F['b'])), "here: %s, not %s" % (fw(F['b']), fw(F['a']))]), True
    if k == 'relabel_to':
        return ch(["this = %s", "%s", "that: %s", "this one: %s"]) % fw(F['b']), True
    if k == 'relabel_not':
        return ch(["not %s", "not a %s", "this: not %s"]) % fw(F['a']), True
    if k == 'ptr_rel':
        return ch(["this %s %s", "that: %s %s", "it's %s %s"]) % (ch(FREL[F['r']]), fw(F['l'])), True
    if k == 'between':
        return ch(["%s btwn %s & %s", "%s between %s + %s", "%s betw. %s and %s", "%s between %s, %s"]) % (fw(F['s']), fw(F['x']), fw(F['y'])), False
    if k == 'plrel':
        return ch(["all %s %s %s", "%s %s %s"]) % (fpl(F['s']), ch(FREL[F['r']]), fw(F['l'])), False

def field():
    nf = ch([1,1,2,2,3,3,4])
    parts, es, ptr = [], [], False
    used = set(); usedl = set()
    sep = ch(['; ', ', ', '. ', ' + ', ' and ', '; ', ' / '])
    for i in range(nf):
        F = fact()
        if F['k'] in ('relabel','relabel_to','relabel_not','ptr_rel') and (ptr or i > 0): continue
        if F['k'] == 'room' and i > 0: continue
        if nf > 1 and F['k'] in ('relabel_to','relabel_not') : continue
        if sep in (' + ', ', ', ' and ') and F['k'] in ('between','count_cmp','room','relabel','present','count','absent','attr'): continue
        if not compatible(F, used, usedl): continue
        ms, ml = mentions(F); used |= ms; usedl |= ml
        u, p = field_one(F)
        if sep != '; ' and u.startswith('+'): u = 'a ' + u.lstrip('+ ')
        u = u.replace('on top of floor', 'on floor')
        if F['k'] == 'room' and nf > 1: u = u.rstrip('.')
        ptr = ptr or p
        parts.append(u); es += expect(F)
    if not parts: return field()
    s = sep.join(parts)
    if R.random() < 0.2 and not s.endswith('.'): s += '.'
    return s, es, ptr
