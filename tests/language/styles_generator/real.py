from gen import *

def cap(s): return s[0].upper() + s[1:]
def the(c, syn=0.35): return 'the ' + word(c, syn)

def tidy(F, syn=0.35):
    s, p = tidy0(F, syn)
    return s.replace('on top of the floor', 'on the floor'), p
def tidy0(F, syn=0.35):
    """Return (sentence without final punctuation, needs_pointer)."""
    k = F['k']
    if k == 'rel_def':
        s, l = the(F['s'], syn), the(F['l'], syn)
        return ch(["%s is %s %s" % (s, relw(F['r']), l), "%s is actually %s %s" % (s, relw(F['r']), l),
                   "%s should be %s %s" % (s, relw(F['r']), l), "you have it wrong: %s is %s %s" % (s, relw(F['r']), l),
                   "%s is %s %s" % (s, relw(F['r']), l)]), False
    if k == 'rel_neg':
        s, l = the(F['s'], syn), the(F['l'], syn)
        return ch(["%s is not %s %s" % (s, relw(F['r']), l), "%s isn't %s %s" % (s, relw(F['r']), l),
                   "No, %s is not %s %s" % (s, relw(F['r']), l)]), False
    if k == 'rel_exist':
        s, l = word(F['s'], syn), the(F['l'], syn)
        return ch(["There is %s %s %s" % (art(s), relw(F['r']), l), "There's %s %s %s" % (art(s), relw(F['r']), l),
                   "You missed %s %s %s" % (art(s), relw(F['r']), l) if False else "There's also %s %s %s" % (art(s), relw(F['r']), l)]), False
    if k == 'count_rel':
        n = F['n']; l = the(F['l'], syn)
        if n == 1:
            return ch(["There is only one %s %s %s" % (word(F['s'], syn), relw(F['r']), l), "There's just one %s %s %s" % (word(F['s'], syn), relw(F['r']), l)]), False
        s = pword(F['s'], syn); nn = num(n)
        return ch(["There are %s %s %s %s" % (nn, s, relw(F['r']), l), "%s %s %s %s" % (cap(nn), s, relw(F['r']), l),
                   "I count %s %s %s %s" % (nn, s, relw(F['r']), l), "There are %s %s %s %s, not %s" % (nn, s, relw(F['r']), l, NUMW[n-1] if n>1 else 'zero')]), False
    if k == 'count':
        n = F['n']
        if n == 1: return ch(["There is only one %s" % word(F['s'], syn), "There's exactly one %s" % word(F['s'], syn), "There is just one %s in the room" % word(F['s'], syn)]), False
        s = pword(F['s'], syn); nn = num(n)
        return ch(["There are %s %s" % (nn, s), "There are exactly %s %s" % (nn, s), "I count %s %s" % (nn, s), "There are %s %s in the picture" % (nn, s),
                   "The number of %s is %s" % (s, nn)]), False
    if k == 'count_cmp':
        n = F['n']; s = pword(F['s'], syn); nn = num(n)
        if F['op'] == '>=': return ch(["There are at least %s %s" % (nn, s), "At least %s %s are in the room" % (nn, s)]), False
        if F['op'] == '<=': return ch(["There are at most %s %s" % (nn, s), "There are no more than %s %s" % (nn, s), "No more than %s %s here" % (nn, s)]), False
        return ch(["There are fewer than %s %s" % (nn, s), "There are fewer than %s %s in this room" % (nn, s)]), False
    if k == 'present':
        w = word(F['s'], syn)
        if F['s'] in ('clothes','stairs'): return ch(["There are %s" % w, "There are %s in the picture" % w]), False
        return ch(["There is %s" % art(w), "There's %s in the room" % art(w), "There is %s here" % art(w), "There's %s in this picture" % art(w)]), False
    if k == 'absent':
        w = pword(F['s'], syn)
        if F['s'] in ('floor','wall','ceiling','door','window','table','sofa','bed','desk','fridge','stove','sink','microwave','tv','counter','rug','laptop','stairs','clothes'):
            if F['s'] in ('stairs','clothes'): return "There are no %s" % word(F['s'], syn), False
            return ch(["There is no %s" % word(F['s'], syn), "There isn't a %s in this room" % word(F['s'], syn), "There's no %s here" % word(F['s'], syn)]), False
        return ch(["There are no %s" % w, "There aren't any %s" % w, "I don't see any %s" % w, "No %s in this room" % w]), False
    if k == 'place_region':
        return ch(["%s is %s" % (the(F['s'], syn), ch(REGW[F['g']])), "%s is %s of the picture" % (the(F['s'], syn), ch(REGW[F['g']])) if F['g'] in ('left','right') and False else "%s is %s" % (the(F['s'], syn), ch(REGW[F['g']]))]), False
    if k == 'place_room':
        return ch(["%s is in the %s" % (the(F['s'], syn), ch(ROOMW[F['rm']])), "%s belongs in the %s" % (the(F['s'], syn), ch(ROOMW[F['rm']])) if False else "%s is in the %s" % (the(F['s'], syn), ch(ROOMW[F['rm']]))]), False
    if k == 'room':
        rw = ch(ROOMW[F['rm']])
        return ch(["This is %s" % art(rw), "We're in the %s" % rw, "This room is the %s" % rw, "We are in the %s" % rw, "This is the %s" % rw, "You're in the %s" % rw]), False
    if k == 'attr':
        return ch(["%s is %s" % (the(F['s'], syn), F['a']), "%s is actually %s" % (the(F['s'], syn), F['a'])]), False
    if k == 'relabel':
        a, b = word(F['a'], syn), word(F['b'], syn)
        def A(w): return w if w in ('clothes','stairs','floor','wall','ceiling') else art(w)
        def T(w): return ('the ' + w) if w in ('floor','wall','ceiling') else A(w)
        return ch(["That's %s, not %s" % (T(b), T(a)), "This is not %s, it's %s" % (T(a), T(b)), "That isn't %s, it's %s" % (T(a), T(b)),
                   "You labelled this as %s but it's %s" % (T(a), T(b)), "This is %s and not %s" % (T(b), T(a)), "It's not %s. It's %s" % (T(a), T(b))]), True
    if k == 'relabel_to':
        b = word(F['b'], syn); bb = b if F['b'] in ('clothes','stairs') else ('the '+b if F['b'] in ('floor','wall','ceiling') else art(b))
        return ch(["That's %s" % bb, "This is %s" % bb, "That one is %s" % bb, "This should be %s" % bb]), True
    if k == 'relabel_not':
        a = word(F['a'], syn); aa = a if F['a'] in ('clothes','stairs') else ('the '+a if F['a'] in ('floor','wall','ceiling') else art(a))
        return ch(["That's not %s" % aa, "This isn't %s" % aa, "That is not %s" % aa]), True
    if k == 'ptr_rel':
        return ch(["It's %s %s" % (relw(F['r']), the(F['l'], syn)), "That is %s %s" % (relw(F['r']), the(F['l'], syn)), "This one is %s %s" % (relw(F['r']), the(F['l'], syn))]), True
    if k == 'between':
        return "%s is between %s and %s" % (the(F['s'], syn), the(F['x'], syn), the(F['y'], syn)), False
    if k == 'plrel':
        return ch(["The %s are %s %s" % (pword(F['s'], syn), relw(F['r']), the(F['l'], syn)), "All the %s are %s %s" % (pword(F['s'], syn), relw(F['r']), the(F['l'], syn))]), False
