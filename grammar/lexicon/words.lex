# Everything that is not a class, number or colour: relations, places, deictics, verbs, cues.
#   phrase = replacement       rewrites tokens before tagging (contractions, casual spellings)
#   phrase -> kind [value]     tags a phrase; the longest phrase wins

# Contractions and casual spellings.
# "No, that's a mug": a "no" opening the note before a pointing word answers the robot; it denies nothing.
no no = no , when after <start> when before that|this|it|that's|thats|it's|its|this's
relabel = this is when after <start> when before <class>
no = no , when after <start> when before that|this|it|that's|thats|it's|its|this's
# "The mug that's on the desk": after a class word, "that" opens a clause about it.
that's = , it is when after <class>
that = , it when after <class>
# "Does the dog need feeding?", "did the cat eat": a helper verb opening the sentence before its subject asks,
# as "is" does there.
does = is when after <start> when before the|a|an|my|your|our|it|he|she|they|this|that|anyone|anybody|someone
did = is when after <start> when before the|a|an|my|your|our|it|he|she|they|this|that|anyone|anybody|someone
do = is when after <start> when before the|my|your|our|they|we|these|those|any|anyone|anybody
# "There's no dog here, only a cat": after a pause, "only a" says the thing is there.
# "The cat is on the sofa, as is the dog": the same place of another thing.
as is = and so is when after <start>
as are = and so are when after <start>
only a = there is a when after <start>
only an = there is an when after <start>
just a = there is a when after <start>
just an = there is an when after <start>
# "It's just a cushion", "that's only a bag": after the verb, "just" and "only" say nothing of the number.
just a = a when after is|are|was|were
just an = an when after is|are|was|were
only a = a when after is|are|was|were
only an = an when after is|are|was|were
# "Rather than the cabinet", "instead of the shelf": the alternative is denied.
rather than = not
instead of = not
# "None of the books are on the desk": the books are not there, which says nothing of books elsewhere.
none of the = not the when before <plural>
# "Neither on the floor nor on the door": "nor" before a relation word denies the next place too.
nor = or when before on|under|in|inside|next|beside|by|behind|above|below|near|left|right|at|to|onto|underneath|beneath
that's = that is
# "What looks like a dog is actually a pillow", "what you think is a cat is a towel": the thing pointed at
# (or named last), first as the robot shows it.
what looks like = this is when after <start>
what seems to be = this is when after <start>
what appears to be = this is when after <start>
what you think is = this is when after <start>
what you have labelled as = this is when after <start>
what you have labelled = this is when after <start>
what you labelled as = this is when after <start>
what you have labeled as = this is when after <start>
what you labeled as = this is when after <start>
what you have marked as = this is when after <start>
what you marked as = this is when after <start>
what you have called = this is when after <start>
what you called = this is when after <start>
what you have got as = this is when after <start>
what you have as = this is when after <start>
what you've labelled as = this is when after <start>
what you've labelled = this is when after <start>
what you've labeled as = this is when after <start>
what you've marked as = this is when after <start>
what you've called = this is when after <start>
what you've got as = this is when after <start>
# ... with where it is shown between ("what you've marked here as a dog is actually a rug").
what you have labelled here as = this is when after <start>
what you have labelled there as = this is when after <start>
what you have labelled over there as = this is when after <start>
what you have labeled here as = this is when after <start>
what you have labeled there as = this is when after <start>
what you have labeled over there as = this is when after <start>
what you have marked here as = this is when after <start>
what you have marked there as = this is when after <start>
what you have marked over there as = this is when after <start>
what you have got here as = this is when after <start>
what you have got there as = this is when after <start>
what you have got over there as = this is when after <start>
what you have called here as = this is when after <start>
what you have called there as = this is when after <start>
what you have called over there as = this is when after <start>
what you have tagged here as = this is when after <start>
what you have tagged there as = this is when after <start>
what you have tagged over there as = this is when after <start>
what you have shown here as = this is when after <start>
what you have shown there as = this is when after <start>
what you have shown over there as = this is when after <start>
what you have detected here as = this is when after <start>
what you have detected there as = this is when after <start>
what you have detected over there as = this is when after <start>
what you have tagged as = this is when after <start>
what you have shown as = this is when after <start>
what you have detected as = this is when after <start>
what you've labelled here as = this is when after <start>
what you've labelled there as = this is when after <start>
what you've labelled over there as = this is when after <start>
what you've labeled here as = this is when after <start>
what you've labeled there as = this is when after <start>
what you've labeled over there as = this is when after <start>
what you've marked here as = this is when after <start>
what you've marked there as = this is when after <start>
what you've marked over there as = this is when after <start>
what you've got here as = this is when after <start>
what you've got there as = this is when after <start>
what you've got over there as = this is when after <start>
what you've called here as = this is when after <start>
what you've called there as = this is when after <start>
what you've called over there as = this is when after <start>
what you've tagged here as = this is when after <start>
what you've tagged there as = this is when after <start>
what you've tagged over there as = this is when after <start>
what you've shown here as = this is when after <start>
what you've shown there as = this is when after <start>
what you've shown over there as = this is when after <start>
what you've detected here as = this is when after <start>
what you've detected there as = this is when after <start>
what you've detected over there as = this is when after <start>
what you've tagged as = this is when after <start>
what you've shown as = this is when after <start>
what you've detected as = this is when after <start>
what you labelled here as = this is when after <start>
what you labelled there as = this is when after <start>
what you labelled over there as = this is when after <start>
what you labeled here as = this is when after <start>
what you labeled there as = this is when after <start>
what you labeled over there as = this is when after <start>
what you marked here as = this is when after <start>
what you marked there as = this is when after <start>
what you marked over there as = this is when after <start>
what you called here as = this is when after <start>
what you called there as = this is when after <start>
what you called over there as = this is when after <start>
what you tagged here as = this is when after <start>
what you tagged there as = this is when after <start>
what you tagged over there as = this is when after <start>
what you shown here as = this is when after <start>
what you shown there as = this is when after <start>
what you shown over there as = this is when after <start>
what you detected here as = this is when after <start>
what you detected there as = this is when after <start>
what you detected over there as = this is when after <start>
what you tagged as = this is when after <start>
what you shown as = this is when after <start>
what you detected as = this is when after <start>
is there = is present when before <end>|.|!|,|;
it's there = it is present when before <end>|.|!|,|;
its there = it is present when before <end>|.|!|,|;
thats = that is
this's = this is
it's = it is
its = it is
there's = there is
theres = there is
here's = here is
what's = what is
whats = what is
where's = where is
who's = who is
we're = we are
you're = you are
you'll = you will
you've = you have
we've = we have
i've = i have
they've = they have
youll = you will
youre = you are
they're = they are
theyre = they are
isn't = is not
isnt = is not
aren't = are not
arent = are not
wasn't = was not
weren't = were not
ain't = is not
don't = do not
dont = do not
doesn't = does not
can't = cannot
i'm = i am
he's = he is
she's = she is
how's = how is
# "Nobody", "no one": no person.
nobody = no person
no one = no person
noone = no person
im = i am
didn't = did not
didnt = did not
one's = one is
w = with
r = are
u = you
ur = you are
2 the = to the
thx = thanks
ty = thank you
pls = please
plz = please

# Being and placement verbs.
is -> be
are -> be
was -> be
were -> be
am -> be
be -> be
has been -> be
have been -> be
has been put -> be
have been put -> be
# "The cat has climbed onto the shelf", "the bag has been left by the door": a move or a placing, finished,
# says where the thing is now.
has gone -> be
have gone -> be
has climbed -> be
have climbed -> be
has crawled -> be
have crawled -> be
has jumped -> be
have jumped -> be
has wandered -> be
have wandered -> be
has settled -> be
have settled -> be
has curled up -> be
have curled up -> be
has been left -> be
have been left -> be
has been placed -> be
have been placed -> be
has been moved -> be
have been moved -> be
has been stacked -> be
have been stacked -> be
has been hung -> be
have been hung -> be
has ended up -> be
have ended up -> be
sits -> be
rests -> be
rest -> be
is resting -> be
sit -> be
stands -> be
stand -> be
hangs -> be
hang -> be
lies -> be
lie -> be
belongs -> be
goes -> be
looks like -> be
seems to be -> be
appears -> be
appear -> be
shows up -> be
show up -> be
should be -> be
# "That should be labelled mug".
should be labelled -> be
should be labeled -> be
should be called -> be
should be marked -> be
should be marked as -> be
should be labelled as -> be
should be labeled as -> be
# "The laptop should sit on the desk", "the mug should go on the shelf".
should sit -> be
should go -> be
should stand -> be
should lie -> be
should rest -> be
should hang -> be
should live -> be
belong -> be

there -> there
present -> there
here -> skip

# Negation and the word "no" (quantity, negation or repair cue, decided from context).
not -> negation
never -> negation
neither -> negation
nor = and
# "Not on the desk or the shelf", "no cats or dogs": under a denial each thing is denied.
or -> or
cannot -> negation

# Deictics.
that -> deictic demonstrative
this -> deictic demonstrative
that there -> deictic demonstrative
this here -> deictic demonstrative
those -> deictic demonstrative plural
these -> deictic demonstrative plural
it -> deictic pronoun
he -> deictic pronoun
she -> deictic pronoun
him -> deictic pronoun
they -> deictic pronoun plural
them -> deictic pronoun plural

# Words for an unnamed thing.
thing -> thing
things -> thing plural
object -> thing
objects -> thing plural
stuff -> thing
area -> thing
piece -> thing
pieces -> thing plural
part -> thing
parts -> thing plural
bits -> thing plural
fragments -> thing plural

# Words for the whole view: never a landmark ("there's no cat in this room"), a room type's holder
# ("the scene is in the kitchen").
room -> scene
room type -> scene
scene -> scene
picture -> scene
image -> scene
photo -> scene
view -> scene
frame -> scene
shot -> scene
screen -> scene
space -> scene

# Determiners that add nothing.
the -> determiner
my -> determiner
our -> determiner
your -> determiner
his -> determiner
her -> determiner
their -> determiner

we -> we
you -> you
called -> called
labelled -> called
labeled -> called
marked -> called
tagged -> called
named -> called
call -> called
# "Call that a mug": an order to relabel.
call = label when after <start>
missed -> missed
forgot -> missed
missing -> missed
add -> missed
did not pick up -> missed
did not see -> missed
did not spot -> missed
did not catch -> missed
did not find -> missed
did not notice -> missed
did not label -> missed
did not get -> missed
did not detect -> missed

# Having, seeing, removing, counting, relabelling, pointing.
has -> have
have -> have
had -> have
has got -> have
have got -> have
have only got -> have
# "You've put the laptop on the floor", "you're showing two mugs": what the robot shows (never a fact).
have put -> have
has put -> have
have placed -> have
are showing -> have
you put = you have
you placed = you have
you show = you have
has only got -> have
# "The shelf holds five books": things held are on furniture and in anything else, unless a place is said.
contains -> holds
contain -> holds
holds -> holds
hold -> holds
is holding -> holds
are holding -> holds
see -> see
can see -> see
i count -> see
# "I make it four chairs": the operator's own count.
i make it -> see
i make that -> see
i can count -> see
i spot -> see
i notice -> see
i found -> see
i spotted -> see
i noticed -> see
you will find -> see
you can find -> see
you will see -> see
right here i see -> pointing
here i see -> pointing
remove -> remove
delete -> remove
erase -> remove
get rid of -> remove
hallucinated -> remove
imagined -> remove
invented -> remove
made up -> remove
take out -> remove
take away -> remove
the number of -> count
number of -> count
count -> count
the count of -> count
count of -> count
change -> change
relabel -> change
label -> change
rename -> change
mark -> change
make -> change
switch -> change
set -> change
-> -> change
i am pointing at -> pointing
i am pointing to -> pointing
i am pointing -> pointing
i point at -> pointing
i pointed at -> pointing
i am looking at -> pointing
i am clicking on -> pointing
i clicked on -> pointing
i clicked -> pointing
i selected -> pointing
i have selected -> pointing
i am selecting -> pointing
i highlighted -> pointing
i am highlighting -> pointing
i am touching -> pointing
# "That one, the one my hand is on, is a mug".
my hand is on -> pointing
my finger is on -> pointing
my hand is over -> pointing
my finger is over -> pointing
i am indicating -> pointing
under my cursor -> pointing
under the cursor -> pointing
with -> with
to -> as
as -> as
as well -> skip
in the wrong place -> skip
in the wrong spot -> skip
somewhere else -> skip
elsewhere -> skip

and -> and
but -> and
plus -> and
also -> skip

# Relations.
on -> relation on
on top of -> relation on
onto -> relation on
upon -> relation on
under -> relation under
underneath -> relation under
beneath -> relation under
above -> relation above
below -> relation below
next to -> relation next_to
beside -> relation next_to
besides -> relation next_to
by -> relation next_to
near -> relation next_to
# "The dog is at the door" ("@" in a note is left alone: "mug @ cabinet (on top)" is on it).
at -> relation next_to
nearby -> relation next_to
close to -> relation next_to
against -> relation next_to
the side of -> skip
left of -> relation left_of
the left of -> relation left_of
the right of -> relation right_of
to left of -> relation left_of
on left of -> relation left_of
to right of -> relation right_of
on right of -> relation right_of
to the left of -> relation left_of
on the left of -> relation left_of
on the left hand side of -> relation left_of
right of -> relation right_of
to the right of -> relation right_of
on the right of -> relation right_of
on the right hand side of -> relation right_of
on the left side of -> relation left_of
on the right side of -> relation right_of
to the left side of -> relation left_of
to the right side of -> relation right_of
left side of -> relation left_of
right side of -> relation right_of
left hand side of -> relation left_of
right hand side of -> relation right_of
in front of -> relation in_front_of
behind -> relation behind
in back of -> relation behind
at the back of -> relation behind
inside -> relation inside
inside of -> relation inside
in -> relation inside
within -> relation inside
into -> relation inside
between -> relation between
in between -> relation between
alongside -> relation next_to
close by -> relation next_to
around -> relation next_to
at the side of -> relation next_to
adjacent to -> relation next_to
to the side of -> relation next_to
by the side of -> relation next_to
supported by -> relation on
near to -> relation next_to
close beside -> relation next_to
atop -> relation on
# "The chairs are round the table" ("a round table" keeps its shape word: only before a determiner).
round = around when before the|a|an|my|our|your|his|her|their|this|that|it
# "Over on the desk", "over by the door", "down behind the sofa": "over" only points the way.
over on -> relation on
over by -> relation next_to
over in -> relation inside
over near -> relation next_to
over next to -> relation next_to
over behind -> relation behind
over under -> relation under
side by side -> reciprocal next_to
next to each other -> reciprocal next_to
beside each other -> reciprocal next_to
next to one another -> reciprocal next_to

# Image regions (camera's point of view).
on the left -> region left
to the left -> region left
at the left -> region left
on the left side -> region left
on the left hand side -> region left
left side -> region left
on the right -> region right
to the right -> region right
at the right -> region right
on the right side -> region right
on the right hand side -> region right
right side -> region right
at the top -> region top
on the top -> region top
up top -> region top
at the bottom -> region bottom
on the bottom -> region bottom
in the middle -> region centre
in the centre -> region centre
in the center -> region centre
in the corner -> region corner
in a corner -> region corner
in the top left corner -> region corner
in the top right corner -> region corner
in the bottom left corner -> region corner
in the bottom right corner -> region corner
at the back -> region back
in the back -> region back
in the background -> region back
at the front -> region front
in the front -> region front
in the foreground -> region front
at left -> region left
at right -> region right
on left -> region left
on right -> region right
at top -> region top
at bottom -> region bottom
in centre -> region centre
in center -> region centre
in middle -> region centre
in corner -> region corner
left -> side left
right -> side right

# Sizes.
big -> size big
large -> size big
huge -> size big
massive -> size big
giant -> size big
small -> size small
little -> size small
tiny -> size small

# Rooms.
kitchen -> room kitchen
living room -> room living_room
lounge -> room living_room
sitting room -> room living_room
front room -> room living_room
bedroom -> room bedroom
bathroom -> room bathroom
hallway -> room hallway
hall -> room hallway
corridor -> room hallway
landing -> room hallway
office -> room office
home office -> room office
study -> room office
dining room -> room dining_room

# Self-repair cues.
sorry -> repair
i mean -> repair
or rather -> repair
rather -> repair
no wait -> repair
wait = wait here when after <start> when before <end>
# "They are both on the bed": "both" after the verb adds nothing.
both = all when after are|were|is
# "There are exactly two lamps, both next to the bed": after a pause and before a place, the things counted.
both = all when after <start> when before on|under|underneath|beneath|above|below|next|beside|by|near|behind|in|inside|left|right|against|at|opposite
# "I count two mugs, and both are on the desk": "both" opening a clause is the things counted before, as
# "some of them" ("none of them") is the class named last.
both = some of them when after <start>|,|and|but when before are|were|sit|lie|stand
wait -> repair
correction -> repair
scratch that -> repair

# Fillers: dropped with a note.
uh -> filler
um -> filler
umm -> filler
erm -> filler
er -> filler
uhm -> filler
hmm -> filler
ah -> filler
oh -> filler
like -> filler
# "The number of mugs is um it's three": "it's" right after the verb (a hesitation between is dropped before
# rewrites) restarts the sentence before the number; it reads as the hesitation it is.
it's = um when after is|are|was|were when before <number>
its = um when after is|are|was|were when before <number>
# "On like the left", "is like next to": the filler goes before phrases are matched, so it splits none.
on like = on
in like = in
at like = at
to like = to
of like = of
by like = by
is like = is
are like = are
under like = under
behind like = behind
between like = between
you know -> filler
# A speaker searching for a word: "it's on the, what do you call it, the counter".
what do you call it -> filler
what is it called -> filler
whatchamacallit -> filler
well -> filler
so -> filler
okay -> greeting
ok -> greeting
alright -> greeting
anyway -> filler
basically -> filler
actually -> filler
# "Five books on the desk actually six": before a bare number after a thing, "actually" repairs the count.
actually = sorry when after <class> when before <number>
really -> filler
definitely -> filler
certainly -> filler
clearly -> filler
obviously -> filler
surely -> filler
honestly -> filler
fyi -> filler
please -> filler
no doubt -> filler
there is no doubt -> filler
from where -> filler
i think -> filler
nothing of the sort = none
nothing of that sort = none
nothing like that = none
i am pretty sure -> filler
i am fairly sure -> filler
fairly sure -> filler
i am sure -> filler
pretty sure -> filler
you got the wrong number of -> count
the wrong number of -> count
wrong number of -> count
i guess -> filler
i believe -> filler
kind of -> filler
sort of -> filler
hey -> greeting
# Talk about the day, the weather or how one feels ("the neighbours are so loud today"): chit-chat. Words
# that also describe things ("a warm blanket", "a lovely vase") are left out.
loud -> greeting
noisy -> greeting
tired -> greeting
exhausted -> greeting
sleepy -> greeting
hungry -> greeting
bored -> greeting
boring -> greeting
weather -> greeting
raining -> greeting
sunny -> greeting
freezing -> greeting
cold -> greeting
chilly -> greeting
hot -> greeting
rainy -> greeting
weekend -> greeting
mondays -> greeting
haha -> greeting
brilliant -> greeting
awesome -> greeting
amazing -> greeting
i am back -> greeting
long day -> greeting
lol -> greeting
funny -> greeting
love -> greeting
song -> greeting
music -> greeting
hurt -> greeting
hurts -> greeting
aches -> greeting
rain -> greeting
later -> greeting
walk -> greeting
weather's = weather is
awful -> greeting
terrible -> greeting
horrible -> greeting
week -> greeting
birthday -> greeting
holiday -> greeting
tomorrow -> greeting
yesterday -> greeting
tonight -> greeting
# A wish, a plan, a habit or another time: the sentence is talk about the home, not what is in view now, and
# none of it is read ("I wish we had a bigger fridge", "we might get a dog next year", "the cat always sleeps
# on my bed", "the cat loves sitting in boxes").
i wish -> talk
we wish -> talk
wish we had -> talk
used to -> talk
next year -> talk
last year -> talk
next week -> talk
last week -> talk
next month -> talk
last month -> talk
always -> talk
usually -> talk
normally -> talk
every day -> talk
every night -> talk
every morning -> talk
loves -> talk
likes -> talk
hates -> talk
should get -> talk
might get -> talk
could get -> talk
going to get -> talk
want to get -> talk
need to get -> talk
thinking of getting -> talk
planning to -> talk
getting better -> greeting
better at this -> greeting

# Words that carry nothing for a correction.
i -> skip
me -> skip
does -> skip
do -> skip
did -> skip
now -> skip
too -> skip
of -> skip
very -> skip
quite -> skip
robot -> skip
# "The robot's in the kitchen": the robot is "you".
the robot is = you are
the robot's = you are
robot's = you are
buddy -> skip
again -> skip
much -> skip
for -> skip
today -> skip
right now -> skip
# How far, before a place: "a bit to the left of", "slightly left of".
slightly -> skip
a bit -> skip
a little -> skip
a little bit -> skip
a tad -> skip
just about -> skip
# "The mug is found on the table".
found -> skip
at the moment -> skip
at the minute -> skip
at present -> skip
currently -> skip
# "In the whole room": how much of it says nothing more.
whole -> skip
entire -> skip
over there -> skip
just there -> skip
great -> greeting
good -> greeting
nice -> greeting
perfect -> greeting
yes -> greeting
yeah -> greeting
then -> skip
from -> skip
anywhere -> skip
somewhere -> skip
directly -> skip
immediately -> skip
down -> skip
located -> skip
positioned -> skip
right there -> there
in your detections -> skip
in the detections -> skip
detection -> skip
detections -> skip
in your labels -> skip
can be found -> be
be found -> be
exist -> there
exists -> there
all together -> skip
together -> skip
standing -> skip
hanging -> skip
mounted -> skip
asleep -> skip
awake -> skip
curled up -> skip
hiding -> skip
sat -> skip
piled -> skip
stacked -> skip
heaped -> skip
scattered -> skip
strewn -> skip
draped -> skip
folded -> skip
propped -> skip
balanced -> skip
snoozing -> skip
fast asleep -> skip
# "The dog is laying on the rug": "lay" for "lie", as it is often said.
laying -> skip
sound asleep -> skip
napping -> skip
up there -> skip
down there -> skip
# "There's nobody here, not even the dog": after a pause, "not even" denies the thing as "no" does.
not even the = no when after <start>|,|and|but
# "There's no such thing as a lamp here"; "the lamp isn't real" (not there).
no such thing as a = no
no such thing as an = no
no such thing as = no
real = there when after not|never
not even a = no when after <start>|,|and|but
not even one = no when after <start>|,|and|but
even -> skip
# Shape and shade words that name no class, colour or size we read ("the low cabinet", "dark blue").
low -> skip
tall -> skip
high -> skip
short -> skip
dark -> skip
pale -> skip
bright -> skip
# "A pile of clothes" is clothes.
pile of -> skip
heap of -> skip
stuck -> skip
sleeping -> skip
curled -> skip
perched -> skip
tucked -> skip
leaning -> skip
hidden -> skip
kept -> skip
stored -> skip
sitting -> skip
lying -> skip
resting -> skip
placed -> skip
pushed -> skip
at all -> skip
too many -> skip
too few -> skip
once -> skip
all -> skip
in here -> skip
in there -> skip
right here -> skip
over here -> skip
in total -> skip
total -> skip
all told -> skip
altogether -> skip
part of -> skip
parts of -> skip
pieces of -> skip
# "On the shelf, top one": which of several, not a part of the picture.
top one = ,
bottom one = ,
middle one = ,
# "You've broken the sofa into pieces": how the robot split a thing is no place of it.
into pieces -> skip
in pieces -> skip
to pieces -> skip
into bits -> skip
in bits -> skip
to bits -> skip
into two -> skip
in two -> skip
in half -> skip
into several -> skip
bits of -> skip
off -> skip
up -> skip

# Verbs of position and posture as a class (any of them, not the corpus's): the finite present reads as "be"
# when a place follows ("the dog sleeps under the table"; "the rug hides a stain" is no naming, so a thing
# after the verb leaves it unread), participles and "put" participles as nothing ("the dog is lounging on
# the sofa", "shoes stashed under the bed"); the relation after them says where.
sleeps = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
slept -> skip
naps = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
napped -> skip
dozes = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
dozing -> skip
dozed -> skip
snoozes = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
snoozed -> skip
lounges = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
lounging -> skip
lounged -> skip
sprawls = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
sprawling -> skip
sprawled -> skip
perches = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
perching -> skip
crouches = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
crouching -> skip
crouched -> skip
kneels = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
kneeling -> skip
knelt -> skip
squats = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
squatting -> skip
squatted -> skip
leans = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
leant -> skip
leaned -> skip
huddles = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
huddling -> skip
huddled -> skip
nestles = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
nestling -> skip
nestled -> skip
snuggles = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
snuggling -> skip
snuggled -> skip
reclines = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
reclining -> skip
reclined -> skip
slumps = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
slumping -> skip
slumped -> skip
slouches = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
slouching -> skip
slouched -> skip
lolls = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
lolling -> skip
lolled -> skip
basks = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
basking -> skip
basked -> skip
waits = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
waiting -> skip
hides = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all
hid -> skip
stood -> skip
lain -> skip
hung -> skip
rested -> skip
parked -> skip
dumped -> skip
stashed -> skip
stowed -> skip
wedged -> skip
jammed -> skip
shoved -> skip
slung -> skip
tossed -> skip
chucked -> skip
laid -> skip
laid out -> skip
spread out -> skip
lined up -> skip
set out -> skip
arranged -> skip
gathered -> skip
clustered -> skip
grouped -> skip
displayed -> skip
sitting pretty -> skip
attached -> skip
fastened -> skip
pinned -> skip
stuck up -> skip
crammed -> skip
squeezed -> skip
squished -> skip
tucked away -> skip
stacked up -> skip
piled up -> skip
bundled -> skip
plonked -> skip
lodged -> skip
sprawled out -> skip
stretched out -> skip
lying down -> skip
sitting down -> skip
standing up -> skip
hanging out -> skip
chilling -> skip
relaxing -> skip
resting up -> skip


# A move finished, by the thing itself or done to it, says where the thing is now: "the towel has fallen onto
# the floor", "the ball has rolled under the sofa", "the lid has been knocked off the table" is unread.
has fallen -> be
have fallen -> be
has rolled -> be
have rolled -> be
has slipped -> be
have slipped -> be
has slid -> be
have slid -> be
has tumbled -> be
have tumbled -> be
has dropped -> be
have dropped -> be
has toppled -> be
have toppled -> be
has blown -> be
have blown -> be
has drifted -> be
have drifted -> be
has moved -> be
have moved -> be
has crept -> be
have crept -> be
has snuck -> be
have snuck -> be
has sneaked -> be
have sneaked -> be
has hopped -> be
have hopped -> be
has run -> be
have run -> be
has walked -> be
have walked -> be
has strayed -> be
have strayed -> be
has been dropped -> be
have been dropped -> be
has been knocked -> be
have been knocked -> be
has been thrown -> be
have been thrown -> be
has been kicked -> be
have been kicked -> be
has been pushed -> be
have been pushed -> be
has been shoved -> be
have been shoved -> be
has been dumped -> be
have been dumped -> be
has been tucked -> be
have been tucked -> be
has been hidden -> be
have been hidden -> be
has been stuffed -> be
have been stuffed -> be
has been tossed -> be
have been tossed -> be
has been dragged -> be
have been dragged -> be
has been carried -> be
have been carried -> be
has been taken -> be
have been taken -> be
# The simple past of a move, when a place follows: "the cat jumped onto the sofa".
fell = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
rolled = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
slipped = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
slid = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
tumbled = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
toppled = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
jumped = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
climbed = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
crawled = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
wandered = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
hopped = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
crept = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
ran = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
walked = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
went = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
moved = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
settled = is when before on|under|underneath|beneath|above|below|next|beside|besides|by|near|nearby|close|against|left|right|in|inside|within|into|between|alongside|around|round|atop|upon|onto|behind|over|up|down|there|here|outside|just|directly|quietly|happily|peacefully|all unless after has|have|had|been
# What a thing or a person is doing where it is ("the laptop is lying closed on the desk", "the toddler is
# playing under the table", "auntie is reading on the sofa"): the place after says where it is.
closed -> skip
lying open -> skip
sitting open -> skip
standing open -> skip
wide open -> skip
shut -> skip
ajar -> skip
upside down -> skip
face down -> skip
face up -> skip
unplugged -> skip
playing -> skip
reading -> skip
eating -> skip
drinking -> skip
chewing -> skip
working -> skip
studying -> skip
writing -> skip
drawing -> skip
colouring -> skip
coloring -> skip
knitting -> skip
sewing -> skip
watching tv -> skip
watching telly -> skip
watching -> skip
snoring -> skip
purring -> skip
grooming -> skip
sunbathing -> skip
cuddled up -> skip
cosied up -> skip
cozied up -> skip
hanging around -> skip
hanging about -> skip
sat down -> skip
playing about -> skip
messing about -> skip
mucking about -> skip
# Words of age and liking that name no class ("our old dog", "my favourite mug").
old -> skip
new -> skip
favourite -> skip
favorite -> skip
lovely -> skip
beloved -> skip
poor -> skip
silly -> skip
naughty -> skip
cheeky -> skip
lazy -> skip
grumpy -> skip

# Utterances that are not corrections.
# Undoing and moving the robot itself are requests ("undo that last change", "back up", "pick the toy up").
undo -> request
redo -> request
revert -> request
back up -> request
reverse -> request
step back -> request
pick -> request
# Asking what the robot can tell apart is a question ("can you tell the mug apart from the bowl?").
can you tell -> question
can you distinguish -> question
can you recognise -> question
can you recognize -> question
can you spot -> question
can you make out -> question
# Complaints about the day are talk ("the kids are driving me mad"); "right then" opening a sentence moves on.
driving me mad -> greeting
driving me crazy -> greeting
driving me nuts -> greeting
driving me up the wall -> greeting
drive me mad -> greeting
drives me mad -> greeting
drives me crazy -> greeting
doing my head in -> greeting
right then = okay when after <start>
right so = okay when after <start>
can you -> request
could you -> request
would you -> request
will you -> request
bring -> request
fetch -> request
scan -> request
show me -> request
come -> request
come back -> request
go -> request
move -> request
pick up -> request
clean -> request
tidy -> request
turn -> request
put -> request
take -> request
open -> request
close -> request
stop -> request
find -> request
get -> request
grab -> request
clear -> request
look at -> request
feed -> request
drop -> request
check -> request
# "Look under the bed", "zoom in on the shelf": where to look next is a request; "look" alone ("look, the
# mug is on the desk") only draws attention.
look under -> request
look in -> request
look inside -> request
look behind -> request
look around -> request
look for -> request
look again -> request
# "Oh look, a lamp": "look" alone only draws attention.
look -> filler
have a look -> request
zoom -> request
zoom in -> request
zoom out -> request
wait here -> request
can you see -> question
can you tell me -> question
could you tell me -> question
do you see -> question
let's -> request
please count -> request
i need you to -> request
i want you to -> request
i would like you to -> request
do not forget to -> request
remember to -> request
make sure -> request
# Household chores and errands asked of the robot. "make the bed" and "set the table" are not a relabel's
# "make" or "set".
make the bed -> request
set the table -> request
lay the table -> request
switch on -> request
switch off -> request
turn on -> request
turn off -> request
wash -> request
wipe -> request
dust -> request
vacuum -> request
hoover -> request
mop -> request
sweep -> request
water the -> request
empty the -> request
unload -> request
load the -> request
fold -> request
hang up -> request
charge -> request
help me -> request
remind me -> request
let the -> request
tidy up -> request
# Questions that open with a helper verb or a stock phrase ("does the dog need feeding", "have you seen my
# keys").
have you -> question
has anyone -> question
has anybody -> question
any idea -> question
do we have -> question
# Getting going and finding one's place are talk, not requests or questions.
please do not -> request
nice one -> thanks
let me think -> greeting
ugh -> greeting
how was your day -> greeting
how is your day -> greeting
how is it going -> greeting
let's get started -> greeting
let's begin -> greeting
let's start -> greeting
where was i -> greeting
where were we -> greeting
what -> question thing
where -> question place
which -> question
who -> question
why -> question
how -> question
how many -> question count
# "Which side of the desk is the mug on? The left.", "is the mug left or right of the desk? Right."
which side of -> question side
what side of -> question side
on which side of -> question side
on what side of -> question side
left or right of -> question side
right or left of -> question side
to the left or right of -> question side
to the left or to the right of -> question side
on the left or right of -> question side
is there -> question exists
are there -> question exists
do you -> question
did you -> question
can i -> question
thanks -> thanks
thank you -> thanks
cheers -> thanks
appreciated -> thanks
appreciate it -> thanks
ta -> thanks
# Praise is chit-chat, not thanks.
well done -> greeting
good job -> greeting
nice work -> greeting
hello -> greeting
exactly right -> greeting
all good -> greeting
fine -> greeting
hang on -> greeting
hold on -> greeting
one sec -> greeting
one second -> greeting
just a sec -> greeting
just a second -> greeting
just a moment -> greeting
let me -> greeting
what a -> greeting
never mind -> greeting
doing great -> greeting
i am home -> greeting
get started -> greeting
what a mess -> greeting
hi -> greeting
good morning -> greeting
good afternoon -> greeting
good evening -> greeting
good night -> greeting
bye -> greeting
goodbye -> greeting
see you -> greeting
how are you -> greeting
