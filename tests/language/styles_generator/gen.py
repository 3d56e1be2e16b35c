import json, random
R = random.Random(20261204)
ch = R.choice

CLASSES = "floor wall ceiling door window stairs rug table chair sofa bed cabinet shelf counter desk sink fridge stove microwave tv lamp mug plate bowl bottle vase book laptop remote box bag shoe clothes pillow blanket plant toy towel person dog cat".split()
ROOMS = "kitchen living_room bedroom bathroom hallway office dining_room".split()

SYN = {
 'sofa': ['sofa','couch','sofa','settee'], 'tv': ['tv','TV','telly','television'],
 'cabinet': ['cabinet','cupboard'], 'counter': ['counter','worktop','countertop','counter'],
 'shelf': ['shelf','bookshelf','shelf'], 'mug': ['mug','cup','mug','coffee mug'],
 'remote': ['remote','remote control','remote'], 'fridge': ['fridge','refrigerator','fridge'],
 'stove': ['stove','cooker','stove'], 'pillow': ['pillow','cushion'], 'plant': ['plant','houseplant','plant','potted plant'],
 'person': ['person','man','woman','person'], 'dog': ['dog','dog','puppy'], 'cat': ['cat','cat','kitten'],
 'bag': ['bag','backpack','bag','handbag'], 'box': ['box','cardboard box','box'], 'bottle': ['bottle','water bottle','bottle'],
 'stairs': ['stairs','staircase'], 'lamp': ['lamp','lamp','floor lamp'], 'table': ['table','table','coffee table','dining table'],
 'chair': ['chair','chair','office chair'], 'sink': ['sink','sink','washbasin'], 'towel': ['towel','towel','bath towel','tea towel'],
 'toy': ['toy','toy','teddy bear'], 'shoe': ['shoe','shoe','trainer','boot'],
}
PL_IRREG = {'person':'people','shelf':'shelves','box':'boxes','stairs':'stairs','clothes':'clothes','couch':'couches','man':'men','woman':'women',
            'puppy':'puppies','kitten':'kittens','tv':'tvs','TV':'TVs','telly':'tellies','bookshelf':'bookshelves','coffee mug':'coffee mugs','cardboard box':'cardboard boxes','water bottle':'water bottles','teddy bear':'teddy bears','floor lamp':'floor lamps','potted plant':'potted plants','remote control':'remote controls','bath towel':'bath towels','tea towel':'tea towels','office chair':'office chairs','coffee table':'coffee tables','dining table':'dining tables','washbasin':'washbasins'}
def word(c, syn=0.35):
    w = c
    if c in SYN and R.random() < syn: w = ch(SYN[c])
    return w
def plural_of(w):
    if w in PL_IRREG: return PL_IRREG[w]
    if w.endswith(('s','x','sh','ch')): return w+'es'
    return w+'s'
def pword(c, syn=0.35):
    if c == 'person': return 'people'
    return plural_of(word(c, syn))

NUMW = {1:'one',2:'two',3:'three',4:'four',5:'five',6:'six',7:'seven',8:'eight',9:'nine',10:'ten',11:'eleven',12:'twelve'}
def num(n, digits=0.4):
    return str(n) if R.random() < digits else NUMW[n]

ROOMW = {'kitchen':['kitchen'],'living_room':['living room','lounge','living room'],'bedroom':['bedroom'],'bathroom':['bathroom'],
         'hallway':['hallway','hall','hallway'],'office':['office','home office','study'],'dining_room':['dining room']}
COL = ['red','blue','green','yellow','black','white','grey','brown','orange','pink','purple']
ATTR = {'mug':['red','blue','white','green','yellow','black'],'sofa':['grey','blue','brown','green','red'],'cat':['black','white','orange','grey'],
        'dog':['brown','black','white'],'rug':['red','blue','grey','green'],'towel':['white','blue','pink','yellow','green'],'lamp':['white','black','yellow'],
        'bowl':['white','blue','red'],'blanket':['purple','blue','red','grey'],'pillow':['yellow','white','orange','pink'],'vase':['blue','white','green'],
        'box':['brown'],'bag':['black','red','blue'],'chair':['black','brown','red'],'door':['white','brown'],'plate':['white','blue'],'bottle':['green','blue'],
        'fridge':['white','grey'],'cabinet':['white','brown'],'shoe':['black','white'],'toy':['red','yellow','blue'],'laptop':['grey','black']}

# plausible relations (subject, landmark)
SURF = ['table','desk','counter','shelf','cabinet']
ON_SMALL = ['mug','plate','bowl','bottle','vase','book','laptop','remote','box','bag','toy','plant','lamp','towel']
SEATS = ['sofa','bed','chair','rug','floor']
ON_SOFT = ['pillow','blanket','towel','cat','dog','person','bag','remote','toy','book']
def pair(rel):
    if rel == 'on':
        if R.random() < 0.5:
            s = ch(ON_SMALL); l = ch(SURF)
        else:
            s = ch(ON_SOFT); l = ch(SEATS)
        if R.random() < 0.1: s, l = ch([('microwave','counter'),('tv','cabinet'),('vase','fridge'),('box','fridge'),('rug','floor'),('shoe','stairs'),('cat','stairs'),('plant','window')])
        return s, l
    if rel == 'under': return ch(['cat','dog','shoe','box','bag','toy','rug','bowl','remote']), ch(['table','desk','bed','chair','sofa','sink','shelf'])
    if rel == 'inside':
        return ch([('mug','sink'),('plate','sink'),('bowl','sink'),('bottle','fridge'),('bowl','fridge'),('plate','cabinet'),('mug','cabinet'),('towel','cabinet'),
                   ('toy','box'),('book','box'),('shoe','box'),('book','bag'),('laptop','bag'),('bowl','microwave'),('plate','microwave'),('remote','box'),('towel','bag'),
                   ('bottle','bag'),('cat','box'),('toy','bag'),('plant','vase'),('remote','bowl')])
    if rel == 'next_to': return ch(['lamp','plant','chair','cabinet','shelf','bag','dog','cat','person','box','bottle','mug']), ch(['sofa','bed','desk','door','window','fridge','tv','table','stove','sink'])
    if rel in ('left_of','right_of'): return ch([('lamp','sofa'),('plant','tv'),('chair','desk'),('shelf','window'),('fridge','stove'),('stove','sink'),('sink','stove'),('microwave','fridge'),('tv','window'),('door','shelf'),('mug','laptop'),('laptop','lamp'),('bed','window'),('lamp','bed'),('chair','sofa'),('cabinet','door'),('bowl','plate'),('vase','book'),('remote','mug'),('dog','chair'),('cat','lamp'),('table','sofa')])
    if rel == 'in_front_of': return ch(['rug','table','chair','person','dog','box','bag','cat']), ch(['sofa','tv','fridge','door','window','stairs','desk','cabinet','stove'])
    if rel == 'behind': return ch(['lamp','plant','box','cat','dog','chair','bag','person','toy']), ch(['sofa','door','tv','desk','bed','table','chair','cabinet'])
    if rel == 'above': return ch([('shelf','desk'),('tv','cabinet'),('microwave','stove'),('window','sink'),('lamp','table'),('shelf','sofa'),('cabinet','counter'),('window','bed'),('shelf','bed'),('cabinet','sink')])
    if rel == 'below': return ch([('cabinet','sink'),('box','shelf'),('bed','window'),('desk','window'),('sofa','window'),('cabinet','tv'),('bag','shelf'),('basket_never','x')][:-1])
RELS = ['on','on','on','under','inside','inside','next_to','next_to','left_of','right_of','in_front_of','behind','above','below']
def relw(rel, style='tidy'):
    return {'on':ch(['on','on','on top of']),'under':ch(['under','under','underneath']),'inside':ch(['in','in','inside']),
            'next_to':ch(['next to','next to','by','beside']),'left_of':ch(['to the left of','left of','on the left of']),
            'right_of':ch(['to the right of','right of','on the right of']),'in_front_of':'in front of','behind':'behind',
            'above':'above','below':'below'}[rel]
REGW = {'left':['on the left','on the left side','at the left'],'right':['on the right','on the right side','at the right'],'top':['at the top','at the top of the picture'],
        'bottom':['at the bottom','at the bottom of the picture'],'centre':['in the middle','in the centre','in the center'],'corner':['in the corner']}
ROOMPLACE = [('laptop','office'),('bed','bedroom'),('towel','bathroom'),('fridge','kitchen'),('sofa','living_room'),('table','dining_room'),('shoe','hallway'),
             ('stove','kitchen'),('desk','office'),('tv','living_room'),('dog','hallway'),('cat','bedroom'),('plant','living_room'),('microwave','kitchen'),('sink','bathroom'),('bag','hallway'),('lamp','bedroom'),('book','office'),('plate','dining_room'),('remote','living_room')]
COUNTABLE = ['mug','plate','bowl','bottle','vase','book','laptop','remote','box','bag','shoe','pillow','blanket','plant','toy','towel','person','dog','cat','chair','lamp','table','shelf','cabinet','window','door','rug','sofa','bed','desk','tv']
CONFUSE = [('cat','towel'),('cat','pillow'),('dog','rug'),('dog','bag'),('towel','blanket'),('pillow','bag'),('table','desk'),('desk','table'),('cabinet','fridge'),
           ('shelf','cabinet'),('box','cabinet'),('chair','sofa'),('tv','window'),('window','tv'),('mug','bowl'),('bowl','plate'),('bottle','vase'),('vase','bottle'),
           ('book','box'),('laptop','book'),('person','clothes'),('clothes','person'),('rug','floor'),('floor','rug'),('wall','door'),('door','wall'),('counter','table'),
           ('stove','counter'),('microwave','box'),('lamp','plant'),('plant','lamp'),('toy','cat'),('shoe','bag'),('blanket','clothes'),('towel','clothes'),('sink','counter'),
           ('stairs','shelf'),('cat','bag'),('dog','toy'),('wall','ceiling'),('ceiling','wall'),('mug','bottle'),('remote','book'),('pillow','blanket'),('bed','sofa'),('sofa','bed'),('window','door')]
def px(): return "pixel:%d,%d" % (R.randrange(8,632), R.randrange(8,472))
def art(w):
    return ('an ' if w[0] in 'aeiou' else 'a ') + w
OPS = {'=':'=', '>=':'>=', '<=':'<='}

def maxn(s):
    if s in ('bed','sofa','tv','table','desk','fridge','shelf','cabinet','door','window','rug','stairs','stove','sink','microwave','counter','laptop','person','dog','cat'): return 3
    if s in ('chair','lamp','plant','bag','blanket'): return 8
    return 12
# ---------- semantic facts ----------
def fact(kinds=None):
    k = ch(kinds or ['rel_def','rel_def','rel_def','rel_neg','rel_exist','rel_exist','count_rel','count_rel','count','count','count_cmp','present','absent','absent',
                     'place_region','place_room','room','room','attr','relabel','relabel','relabel_to','relabel_not','ptr_rel','between','plrel'])
    F = {'k':k}
    if k in ('rel_def','rel_neg','rel_exist','count_rel','plrel'):
        r = ch(RELS); s, l = pair(r)
        if k in ('count_rel','plrel') and maxn(s) < 6: s, l, r = ch([('book','shelf','on'),('mug','counter','on'),('plate','table','on'),('pillow','sofa','on'),('shoe','door','next_to'),('toy','bed','under'),('bottle','fridge','inside'),('plate','sink','inside'),('chair','table','next_to'),('box','bed','under')])
        if False and s in ('tv','microwave','rug','sink','stove','fridge','bed','desk','door','window'): s, l = 'book','shelf'; r='on'
        F.update(s=s, r=r, l=l, n=R.randint(2, maxn(s)))
        if k == 'count_rel' and R.random() < 0.12: F['n'] = 1
    elif k in ('count','count_cmp'):
        s = ch(COUNTABLE); F.update(s=s, n=R.randint(1 if k=='count' else 2, maxn(s)), op='=' if k=='count' else ch(['>=','<=','<=','fewer']))
        if F['op']=='fewer': F['n'] = max(F['n'],2)
    elif k in ('present','absent'):
        F.update(s=ch(CLASSES[3:] + ['person','dog','cat','person','dog','cat']))
        if F['s'] == 'stairs' and k == 'absent': F['s'] = 'dog'
    elif k == 'place_region':
        F.update(s=ch(['lamp','plant','chair','tv','door','window','sofa','bed','box','dog','cat','person','rug','shelf','cabinet','fridge','bag','table']), g=ch(list(REGW)))
    elif k == 'place_room':
        s, rm = ch(ROOMPLACE); F.update(s=s, rm=rm)
    elif k == 'room': F.update(rm=ch(ROOMS))
    elif k == 'attr':
        s = ch(list(ATTR)); F.update(s=s, a=ch(ATTR[s]))
    elif k in ('relabel','relabel_to','relabel_not'):
        a, b = ch(CONFUSE); F.update(a=a, b=b)
    elif k == 'ptr_rel':
        r = ch(['on','on','under','inside','next_to','left_of','right_of','behind','in_front_of']); _, l = pair(r); F.update(r=r, l=l)
    elif k == 'between':
        F.update(**dict(zip('sxy', ch([('lamp','sofa','tv'),('mug','laptop','lamp'),('chair','table','window'),('plant','sofa','door'),('fridge','stove','counter'),('cat','pillow','blanket'),
                 ('bowl','mug','plate'),('table','sofa','tv'),('remote','mug','book'),('bed','lamp','window'),('stove','sink','fridge'),('dog','chair','door'),('vase','book','plant'),
                 ('rug','sofa','table'),('box','bed','desk'),('person','sofa','window')]))))
    return F

def expect(F):
    k = F['k']
    if k in ('rel_def','plrel'):
        s = F['s'] + ('*' if k=='plrel' else ''); return ["rel(%s, %s, %s)" % (s, F['r'], F['l'])]
    if k == 'rel_neg': return ["rel(%s, !%s, %s)" % (F['s'], F['r'], F['l'])]
    if k == 'rel_exist': return ["present(%s)" % F['s'], "rel(%s, %s, %s)" % (F['s'], F['r'], F['l'])]
    if k == 'count_rel':
        star = '*' if F['n'] > 1 else ''
        return ["count(%s, =%d)" % (F['s'], F['n']), "rel(%s%s, %s, %s)" % (F['s'], star, F['r'], F['l'])]
    if k == 'count': return ["count(%s, =%d)" % (F['s'], F['n'])]
    if k == 'count_cmp':
        if F['op']=='fewer': return ["count(%s, <=%d)" % (F['s'], F['n']-1)]
        return ["count(%s, %s%d)" % (F['s'], F['op'], F['n'])]
    if k == 'present': return ["present(%s)" % F['s']]
    if k == 'absent': return ["absent(%s)" % F['s']]
    if k == 'place_region': return ["place(%s, %s)" % (F['s'], F['g'])]
    if k == 'place_room': return ["place(%s, room:%s)" % (F['s'], F['rm'])]
    if k == 'room': return ["room(%s)" % F['rm']]
    if k == 'attr': return ["attr(%s, %s)" % (F['s'], F['a'])]
    if k == 'relabel': return ["relabel(@, %s -> %s)" % (F['a'], F['b'])]
    if k == 'relabel_to': return ["relabel(@, -> %s)" % F['b']]
    if k == 'relabel_not': return ["relabel(@, %s -> )" % F['a']]
    if k == 'ptr_rel': return ["rel(@, %s, %s)" % (F['r'], F['l'])]
    if k == 'between': return ["rel(%s, between, %s, %s)" % (F['s'], F['x'], F['y'])]

def mentions(F):
    subj = {F[x] for x in ('s', 'a', 'b') if x in F}
    land = {F[x] for x in ('l', 'x', 'y') if x in F}
    return subj, land
def compatible(F, seen_s, seen_l):
    s, l = mentions(F)
    if s & (seen_s | seen_l): return False
    if l & seen_s: return False
    return True
