from styles import *

def T(c, syn=0.35): return 'the ' + word(c, syn)
def A(c, syn=0.35): return art(word(c, syn))
def rp(r): return r

def h_coord_count():
    s1, s2, l, r = ch([('plate','bowl','table','on'),('book','vase','shelf','on'),('mug','bottle','counter','on'),('pillow','blanket','sofa','on'),('shoe','bag','door','next_to'),
                       ('toy','box','bed','under'),('mug','plate','sink','inside'),('book','laptop','desk','on'),('plate','mug','cabinet','inside'),('pillow','toy','bed','on'),('bottle','bowl','fridge','inside'),('shoe','box','bed','under')])
    n = R.randint(2, 6)
    u = ch(["%s %s and %s %s %s" % (num(n,0.2), pword(s1), A(s2), relw(r), T(l)), "there are %s %s and %s %s %s" % (num(n,0.2), pword(s1), A(s2), relw(r), T(l)),
            "%s %s and %s %s %s" % (cap(num(n,0.1)), pword(s1), A(s2), relw(r), T(l))])
    e = ["count(%s, =%d)" % (s1, n), "rel(%s*, %s, %s)" % (s1, r, l), "present(%s)" % s2, "rel(%s, %s, %s)" % (s2, r, l)]
    return u, e, False
def h_coord_def():
    s1, s2, l, r = ch([('mug','laptop','desk','on'),('cat','dog','rug','on'),('lamp','plant','sofa','next_to'),('plate','bowl','table','on'),('remote','book','sofa','on'),
                       ('chair','table','window','in_front_of'),('box','bag','bed','under'),('towel','bottle','sink','next_to'),('fridge','stove','window','left_of'),('mug','bowl','sink','inside'),('shelf','lamp','desk','above' if False else 'right_of')])
    if R.random() < 0.5: s1, s2 = s2, s1
    u = ch(["%s and %s are %s %s" % (T(s1), T(s2), relw(r), T(l)), "both %s and %s are %s %s" % (T(s1), T(s2), relw(r), T(l)),
            "%s is %s %s, and so is %s" % (T(s1), relw(r), T(l), T(s2)), "%s is %s %s and %s is too" % (T(s1), relw(r), T(l), T(s2))])
    return cap(u) + '.', ["rel(%s, %s, %s)" % (s1, r, l), "rel(%s, %s, %s)" % (s2, r, l)], False
def h_multi_rel():
    s, r1, l1, r2, l2 = ch([('lamp','on','desk','left_of','laptop'),('mug','on','counter','next_to','sink'),('chair','in_front_of','desk','left_of','window'),('plant','next_to','sofa','in_front_of','window'),
                            ('cat','on','bed','next_to','pillow'),('remote','on','table','right_of','mug'),('rug','under','table','in_front_of','sofa'),('dog','under','table','behind','chair'),
                            ('bowl','on','counter','left_of','stove'),('vase','on','shelf','next_to','book'),('bag','on','floor','next_to','door'),('box','under','desk','behind','chair'),('laptop','on','desk','in_front_of','lamp'),('towel','on','counter','right_of','sink')])
    u = ch(["%s is %s %s, %s %s" % (T(s), relw(r1), T(l1), relw(r2), T(l2)), "%s is %s %s and %s %s" % (T(s), relw(r1), T(l1), relw(r2), T(l2)),
            "%s is %s %s and it's also %s %s" % (T(s), relw(r1), T(l1), relw(r2), T(l2))])
    return cap(u) + '.', ["rel(%s, %s, %s)" % (s, r1, l1), "rel(%s, %s, %s)" % (s, r2, l2)], False
def h_has_it():
    l, s, r = ch([('shelf','vase','on'),('shelf','book','on'),('table','plate','on'),('sofa','pillow','on'),('sink','mug','inside'),('desk','book','on'),('box','toy','inside'),
                  ('bed','pillow','on'),('counter','bottle','on'),('cabinet','plate','inside'),('bag','book','inside'),('fridge','bottle','inside'),('table','bowl','on'),('bed','toy','on')])
    n = R.randint(1, 6)
    pr = {'on':ch(['on it','on top of it','on it']),'inside':ch(['in it','inside it'])}[r]
    if n == 1:
        u = ch(["%s has %s %s" % (T(l), A(s), pr), "%s has one %s %s" % (T(l), word(s), pr)])
        e = (["present(%s)" % s] if u.split(' has ')[1].startswith(('a ','an ')) else ["count(%s, =1)" % s]) + ["rel(%s, %s, %s)" % (s, r, l)]
    else:
        u = "%s has %s %s %s" % (T(l), num(n, 0.3), pword(s), pr)
        e = ["count(%s, =%d)" % (s, n), "rel(%s*, %s, %s)" % (s, r, l)]
    return cap(u) + ch(['.','','!']), e, False
def h_has_two():
    l, s1, r1, s2, r2 = ch([('desk','laptop','on','lamp','next_to'),('sofa','pillow','on','plant','next_to'),('bed','blanket','on','box','under'),('table','vase','on','dog','under'),
                            ('tv','cabinet','below','plant','next_to'),('fridge','vase','on','bag','next_to'),('desk','mug','on','chair','in_front_of'),('sink','bowl','inside','towel','next_to'),('bed','cat','on','shoe','under')])
    def pp(r): return {'on':'on it','next_to':ch(['next to it','beside it']),'under':'under it','below':'below it','inside':'in it','in_front_of':'in front of it'}[r]
    u = "%s has %s %s and %s %s" % (T(l), A(s1), pp(r1), A(s2), pp(r2))
    return cap(u) + '.', ["present(%s)" % s1, "rel(%s, %s, %s)" % (s1, r1, l), "present(%s)" % s2, "rel(%s, %s, %s)" % (s2, r2, l)], False
def h_it_attr():
    s = ch(list(ATTR)); a = ch(ATTR[s]); r = ch(RELS)
    s2, l = pair(r)
    for _ in range(30):
        if s2 in ATTR: break
        r = ch(RELS); s2, l = pair(r)
    if s2 not in ATTR: s2, l, r = 'mug', 'counter', 'on'
    a = ch(ATTR[s2])
    if R.random() < 0.5:
        u = "there's %s %s %s and it's %s" % (A(s2), relw(r), T(l), a); e = ["present(%s)" % s2, "rel(%s, %s, %s)" % (s2, r, l), "attr(%s, %s)" % (s2, a)]
    else:
        u = "%s is %s %s and it is %s" % (T(s2), relw(r), T(l), a); e = ["rel(%s, %s, %s)" % (s2, r, l), "attr(%s, %s)" % (s2, a)]
    return cap(u) + '.', e, False
def h_neg_alt():
    r = ch(['on','on','under','inside','next_to','in_front_of','behind']); s, l = pair(r)
    if s == 'person': return h_neg_alt()
    l2 = l
    for _ in range(40):
        if l2 != l and l2 != s: break
        l2 = pair(r)[1]
    if l2 == l or l2 == s: return h_neg_alt()
    rw = relw(r)
    u = ch(["%s is %s %s, not %s %s" % (T(s), rw, T(l), rw, T(l2)), "%s is %s %s, not %s" % (T(s), rw, T(l), T(l2)), "%s isn't %s %s, it's %s %s" % (T(s), rw, T(l2), rw, T(l))])
    return cap(u) + '.', ["rel(%s, %s, %s)" % (s, r, l), "rel(%s, !%s, %s)" % (s, r, l2)], False
def h_neg_rel_swap():
    s, l, r1, r2 = ch([('cat','bed','on','under'),('lamp','sofa','left_of','right_of'),('dog','table','under','next_to'),('box','bed','under','on'),('plant','tv','right_of','left_of'),
                       ('chair','desk','behind','in_front_of'),('bottle','fridge','on','inside'),('bag','chair','under','on'),('toy','sofa','on','under'),('shelf','desk','below','above'),('mug','microwave','on','inside')])
    u = ch(["%s isn't %s %s, it's %s it" % (T(s), relw(r1), T(l), relw(r2)), "%s is %s %s, not %s it" % (T(s), relw(r2), T(l), relw(r1))])
    return cap(u) + '.', ["rel(%s, !%s, %s)" % (s, r1, l), "rel(%s, %s, %s)" % (s, r2, l)], False
def h_neither():
    a, b = ch([('dog','cat'),('cat','dog'),('laptop','lamp'),('mug','bowl'),('person','dog'),('remote','book'),('plate','bowl'),('pillow','blanket'),('bag','box')])
    if R.random() < 0.5:
        r = ch(['on','under','next_to','in_front_of']); _, l = pair(r)
        if l in (a, b): l = 'sofa'
        u = "neither %s nor %s is %s %s" % (T(a,0.2), T(b,0.2), relw(r), T(l))
        return cap(u) + '.', ["rel(%s, !%s, %s)" % (a, r, l), "rel(%s, !%s, %s)" % (b, r, l)], False
    u = ch(["there's neither %s nor %s" % (A(a,0.2), A(b,0.2)), "there is no %s and no %s" % (word(a,0.2), word(b,0.2)), "no %s and no %s in here" % (pword(a,0.2), pword(b,0.2)),
            "I see neither %s nor %s" % (A(a,0.2), A(b,0.2))])
    return cap(u) + '.', ["absent(%s)" % a, "absent(%s)" % b], False
def h_ptr_def():
    a, b = ch(CONFUSE)
    if b in ('floor','wall','ceiling','stairs','clothes') or a in ('floor','wall','ceiling','stairs','clothes'): return h_ptr_def()
    u = ch(["this %s is not %s" % (word(b), A(a)), "that %s isn't %s" % (word(b), A(a)), "the robot thinks it's %s but it's %s" % (A(a), A(b)),
            "you think that's %s but it's %s" % (A(a), A(b)), "the thing you called %s is %s" % (A(a), A(b)), "that's not %s at all, it's just %s" % (A(a), A(b)),
            "look here, this is %s, not %s" % (A(b), A(a))])
    return cap(u) + ch(['.','','!']), ["relabel(@, %s -> %s)" % (a, b)], True
def h_ptr_rel():
    b = ch(['mug','lamp','book','towel','box','bag','remote','plant','vase','bottle','shoe','toy'])
    r = ch(['on','on','next_to','under','inside','behind'])
    for _ in range(30):
        s, l = pair(r)
        if l != b: break
    u = ch(["that's %s and it's %s %s" % (A(b), relw(r), T(l)), "this is %s, it's %s %s" % (A(b), relw(r), T(l)), "that one is %s %s, and it's %s" % (relw(r), T(l), A(b))])
    return cap(u) + '.', ["relabel(@, -> %s)" % b, "rel(@, %s, %s)" % (r, l)], True
def h_perceive():
    v = R.random()
    if v < 0.4:
        r = ch(RELS); s, l = pair(r); n = R.randint(1, maxn(s) if maxn(s) > 3 else 3)
        if s in ('person','dog','cat') or maxn(s) <= 3: n = ch([1,2])
        if n == 1:
            u = ch(["I can see %s %s %s" % (A(s), relw(r), T(l)), "I can see one %s %s %s" % (word(s), relw(r), T(l))])
            e = (["present(%s)" % s] if ' one ' not in u else ["count(%s, =1)" % s]) + ["rel(%s, %s, %s)" % (s, r, l)]
        else:
            u = ch(["I can see %s %s %s %s" % (num(n,0.3), pword(s), relw(r), T(l)), "I can count %s %s %s %s" % (num(n,0.3), pword(s), relw(r), T(l))])
            e = ["count(%s, =%d)" % (s, n), "rel(%s*, %s, %s)" % (s, r, l)]
        return cap(u) + '.', e, False
    if v < 0.7:
        s = ch(['dog','cat','person']); post = ch(['sitting','lying','standing','sleeping','curled up']) if s != 'person' else ch(['sitting','standing','lying'])
        r, l = ch([('on','sofa'),('on','bed'),('on','rug'),('next_to','door'),('next_to','window'),('under','table'),('in_front_of','tv'),('on','chair'),('behind','sofa'),('in_front_of','fridge'),('on','stairs'),('next_to','desk'),('under','desk')])
        if post == 'standing' and r == 'on': post = 'sitting'
        if R.random() < 0.5:
            u = "%s is %s %s %s" % (T(s), post, relw(r), T(l)); e = ["rel(%s, %s, %s)" % (s, r, l)]
        else:
            sw = word(s) if s != 'person' else ch(['man','woman','kid','child','person'])
            u = "there's %s %s %s %s" % (art(sw), post, relw(r), T(l)); e = ["present(%s)" % s, "rel(%s, %s, %s)" % (s, r, l)]
        return cap(u) + '.', e, False
    s = ch(['bottle','cat','dog','remote','laptop','plant','vase','shoe','toy','mug'])
    u = ch(["I can't see any %s" % pword(s), "I don't see a single %s" % word(s), "I can see %s" % A(s), "I can definitely see %s in there" % A(s)])
    return cap(u) + '.', ["absent(%s)" % s] if "n't" in u else ["present(%s)" % s], False
def h_around():
    s, l = ch([('chair','table'),('chair','table'),('chair','desk'),('pillow','bed'),('toy','box'),('plant','sofa'),('shoe','door')])
    n = R.randint(2, 8 if s=='chair' else 5)
    u = ch(["there are %s %s around %s" % (num(n,0.3), pword(s), T(l)), "%s %s around %s" % (num(n,0.3), pword(s), T(l))])
    return cap(u) + '.', ["count(%s, =%d)" % (s, n), "rel(%s*, next_to, %s)" % (s, l)], False
def h_front():
    r = ch(RELS); s, l = pair(r); rw = relw(r)
    if R.random() < 0.5 or maxn(s) <= 3:
        u = ch(["%s %s there's %s" % (rw, T(l), A(s)), "%s %s is %s" % (rw, T(l), A(s)), "%s %s, there is %s" % (rw, T(l), A(s))])
        e = ["present(%s)" % s, "rel(%s, %s, %s)" % (s, r, l)]
    else:
        n = R.randint(2, min(maxn(s), 8))
        u = ch(["%s %s there are %s %s" % (rw, T(l), num(n,0.3), pword(s)), "%s %s you'll find %s %s" % (rw, T(l), num(n,0.3), pword(s)), "%s %s: %s %s" % (rw, T(l), num(n,0.3), pword(s))])
        e = ["count(%s, =%d)" % (s, n), "rel(%s*, %s, %s)" % (s, r, l)]
    return cap(u) + '.', e, False
def h_but_no():
    a, b = ch([('chair','table'),('plate','bowl'),('pillow','blanket'),('book','laptop'),('mug','bottle'),('shoe','bag'),('lamp','tv'),('plant','vase'),('towel','sink'),('toy','box'),('dog','cat'),('cat','dog')])
    n = R.randint(2, min(maxn(a), 6)) if maxn(a) > 3 else 2
    u = ch(["there are %s %s but no %s" % (num(n,0.3), pword(a), word(b) if maxn(b)<=3 else pword(b)), "%s %s, and not a single %s" % (num(n,0.3), pword(a), word(b)),
            "there are %s %s, and there isn't %s" % (num(n,0.3), pword(a), A(b))])
    return cap(u) + '.', ["count(%s, =%d)" % (a, n), "absent(%s)" % b], False
def h_room_plus():
    rm, s, r, l = ch([('kitchen','mug','inside','sink'),('kitchen','plate','on','counter'),('living_room','pillow','on','sofa'),('bedroom','pillow','on','bed'),('office','book','on','desk'),
                      ('bathroom','towel','next_to','sink'),('dining_room','chair','next_to','table'),('hallway','shoe','next_to','door'),('living_room','remote','on','table'),('kitchen','bottle','inside','fridge')])
    n = R.randint(2, 6)
    u = ch(["this is the %s and there are %s %s %s %s" % (ch(ROOMW[rm]), num(n,0.3), pword(s), relw(r), T(l)), "we're in the %s, with %s %s %s %s" % (ch(ROOMW[rm]), num(n,0.3), pword(s), relw(r), T(l))])
    return cap(u) + '.', ["room(%s)" % rm, "count(%s, =%d)" % (s, n), "rel(%s*, %s, %s)" % (s, r, l)], False
def h_not_one():
    s = ch(['vase','lamp','chair','plant','pillow','mug','bowl','book','towel','bottle'])
    n = R.randint(2, 5); m = ch([x for x in range(1, 6) if x != n])
    u = ch(["there aren't %s %s, there are %s" % (NUMW[m], pword(s), NUMW[n]), "not %s %s but %s" % (NUMW[m], pword(s) if m>1 else word(s), NUMW[n]), "there are %s %s, not %s" % (NUMW[n], pword(s), NUMW[m])])
    return cap(u) + '.', ["count(%s, =%d)" % (s, n)], False
def h_between_on():
    s, x, y, l = ch([('plate','mug','bowl','table'),('mug','laptop','lamp','desk'),('remote','mug','book','table'),('vase','book','plant','shelf'),('bowl','plate','bottle','counter'),('cat','pillow','blanket','bed')])
    u = ch(["%s is on %s, between %s and %s" % (T(s), T(l), T(x), T(y)), "%s sits on %s, between %s and %s" % (T(s), T(l), T(x), T(y))])
    return cap(u) + '.', ["rel(%s, between, %s, %s)" % (s, x, y), "rel(%s, on, %s)" % (s, l)], False
def h_people():
    n = ch([2,2,3,4]); r, l = ch([('on','sofa'),('next_to','table'),('in_front_of','tv'),('on','stairs'),('next_to','window'),('behind','sofa')])
    rw = 'on' if r == 'on' else relw(r)
    u = ch(["there are %s people %s %s" % (num(n,0.2), rw, T(l)), "%s people are %s %s" % (num(n,0.2), rw, T(l)), "I can see %s people %s %s" % (num(n,0.2), rw, T(l))])
    return cap(u) + '.', ["count(person, =%d)" % n, "rel(person*, %s, %s)" % (r, l)], False
HARD = [h_coord_count]*3 + [h_coord_def]*3 + [h_multi_rel]*3 + [h_has_it]*3 + [h_has_two]*2 + [h_it_attr]*2 + [h_neg_alt]*3 + [h_neg_rel_swap]*2 + [h_neither]*3 + [h_ptr_def]*3 + [h_ptr_rel]*2 + [h_perceive]*3 + [h_around] + [h_front]*3 + [h_but_no]*2 + [h_room_plus] + [h_not_one] + [h_between_on] + [h_people]
def hard():
    u, e, p = ch(HARD)()
    if R.random() < 0.3: u = u.lower()
    return u, e, p
