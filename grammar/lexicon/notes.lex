# Field-note shorthand: abbreviations, symbols and clipped words typed in terse notes. Same syntax as
# slips.lex; a rewrite to "," ":" ";" or "." separates clauses like that punctuation.

# Symbols (the tokeniser keeps them as words; ">=" written together is one word).
/ = , when before on|under|undr|in|inside|left|lft|right|rt|next|nxt|adj|beside|behind|by|near|above|abv|below|blw|at|over|l|r
/ = ;
-> = , when before on|under|undr|in|inside|left|lft|right|rt|next|nxt|adj|beside|behind|by|near|above|abv|below|blw|at|over|l|r
# "mug + lamp on desk", "2 mugs + 1 lamp on desk": between two things, "+" joins them as "and" does, so a place
# after them is both things'.
+ = and when after <class> when before <class>|<number>|a|an
+ = , unless after <start>
& = and
= = it is when after <start> when before <class>|a|an
= = :
>= = at least
=> = at least
<= = at most
=< = at most
> = more than
< = fewer than
# A spaced dash is a note's colon: "rug - centre", "person - corner" read as after ":".
- = :
~ = about

# Whether the robot's label was a false alarm or a miss; "+" opening a note adds a thing.
fp = false positive
false pos = false positive
false positive -> remove
fn = false negative
false neg = false negative
false negative -> missed
+ = add when after <start>
obj = object
pt = this
det = detection
dets = detections
missed det = missed
missed dets = missed
objs = objects

# "here: mug" opening a note names the thing pointed at, as "this: mug" does.
here = this when after <start> when before <end>

# Sides and relations. A lone "L" or "R" before a pause is a side ("L: mug, R: lamp"); "@" is "at":
# "mug @ L of desk", "mug @ R desk".
@ l of = left of
@ r of = right of
@ l = left of when before <class>|the
@ r = right of when before <class>|the
@ l = on the left when before <end>
@ r = on the right when before <end>
l = left when before <end>|-|=|,|;|.|/|+
r = right when before <end>|-|=|,|;|.|/|+
adj to = next to
adj = next to
l of = left of
r of = right of
to l of = left of
to r of = right of
to the l of = left of
to the r of = right of
on l = on the left
on r = on the right
l side = left side
r side = right side
nxt = next to when before <class>|the|a
nxt = next
lft = left
lft of = left of
rt of = right of
nxt to = next to
nxt 2 = next to
next 2 = next to
nr = near
b / w = between
rt = right
# Colours clipped in notes.
blk = black
wht = white
grn = green
brn = brown
gry = grey
ylw = yellow
pnk = pink
prpl = purple
orng = orange
undr = under
blw = below
bhd = behind
bh = behind
btwn = between
betw = between
btw = between
abv = above
front of = in front of unless after in|the|at|to
frnt of = in front of
infr of = in front of
top = at the top unless after the|on|at|of
btm = at the bottom
bottom = at the bottom unless after the|on|at|of
ctr = counter
ctre = at the centre unless after the|in|at
middle = in the middle unless after the|in|at

# "cabinet: mug on top": "on top" closing a note is "on" the thing named before the colon.
on top = on when before <end>|,|;|.|/|+
# Which shelf it is says no more than "shelf" ("on the top shelf" is no image region).
top shelf = shelf
top shelves = shelves
bottom shelf = shelf
bottom shelves = shelves

# Clipped class words.
tbl = table
tbls = tables
wdw = window
wdws = windows
cab = cabinet
cabs = cabinets
cupbd = cupboard
cupbds = cupboards
ppl = people
pers = person
bk = book
bks = books
bkshelf = bookshelf
pic = picture
rm = room
liv rm = living room
living rm = living room
lvg rm = living room
bed rm = bedroom
bedrm = bedroom
bath rm = bathroom
bathrm = bathroom
dining rm = dining room
din rm = dining room
hallwy = hallway
kit = kitchen
ofc = office

# Quantities.
max = at most
# "chairs x 4": a note's multiplier written apart from its number.
x = : when before <number>
min = at least
w / = with

# A noted thing's answer or place in one word after a colon or dash ("fridge: yes", "person: corner").
yes = present when after :|-|=
y = present when after :|-|=
corner = in the corner when after :|-|=
# "tbl centre", "rug middle": a region word right after a noted thing and closing the note is its place.
centre = in the centre when after <class> when before <end>|,|;|.|/|+
center = in the centre when after <class> when before <end>|,|;|.|/|+
middle = in the middle when after <class> when before <end>|,|;|.|/|+
corner = in the corner when after <class> when before <end>|,|;|.|/|+
# "chairs x4 round tbl": "round" before a noun phrase is "around", unless it describes one ("the round table").
round = around when before <class>|tbl|tbls|the|a|an|my|our|your|his|her|their unless after <start>|the|a|an|this|that|is|are|<number>
# "lamp in corner": the region phrase "in the corner".
corner = the corner when after in
center = in the centre when after :|-|=
centre = in the centre when after :|-|=
middle = in the middle when after :|-|=
top of pic = at the top
top of picture = at the top
top of image = at the top
top of photo = at the top
bottom of pic = at the bottom
bottom of picture = at the bottom
bottom of image = at the bottom
bottom of photo = at the bottom
no = none when after : when before <end>

# "Exactly!" alone agrees; it counts nothing.
exactly = great when after <start> when before <end>
# "sofa col: grey", "rug colour - blue": the word for colour before a colour names nothing itself.
col -> skip
colour -> skip
color -> skip
clr -> skip
