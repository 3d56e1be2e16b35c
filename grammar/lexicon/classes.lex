# Class words beyond the canonical names in classes.toml.
# Canonical names and every singular synonym get a regular English plural unless an explicit plural
# entry exists or the word is marked `mass` or `plural` (plural-only).
#   phrase -> class NAME            a singular synonym
#   phrase -> class NAME plural SINGULAR   the plural of SINGULAR (irregular forms)
#   phrase -> class NAME plural     a plural-only word (no singular)
#   phrase -> class NAME mass       a mass noun: no plural, agrees as singular
#   phrase -> class NAME whole      a plural-only word naming one thing ("the stairs": one staircase)

# Irregular plurals of canonical names.
shelves -> class shelf plural shelf
people -> class person plural person
clothes -> class clothes whole
stairs -> class stairs whole

# Synonyms.
floorboards -> class floor plural
ceiling light -> class lamp
doorway -> class door
staircase -> class stairs
steps -> class stairs whole
carpet -> class rug
mat -> class rug
dining table -> class table
coffee table -> class table
bedside table -> class table
side table -> class table
bedside cabinet -> class cabinet
armchair -> class chair
stool -> class chair
couch -> class sofa
settee -> class sofa
cupboard -> class cabinet
wardrobe -> class cabinet
drawer unit -> class cabinet
chest of drawers -> class cabinet
chests of drawers -> class cabinet plural chest of drawers
bookshelf -> class shelf
bookshelves -> class shelf plural bookshelf
bookcase -> class shelf
worktop -> class counter
countertop -> class counter
basin -> class sink
washbasin -> class sink
wash basin -> class sink
hand basin -> class sink
washbowl -> class sink
refrigerator -> class fridge
cooker -> class stove
oven -> class stove
hob -> class stove
television -> class tv
telly -> class tv
tellies -> class tv plural telly
light -> class lamp
cup -> class mug
dish -> class plate
notebook -> class book
computer -> class laptop
remote control -> class remote
controller -> class remote
carton -> class box
crate -> class box
backpack -> class bag
handbag -> class bag
rucksack -> class bag
boot -> class shoe
trainer -> class shoe
slipper -> class shoe
clothing -> class clothes mass
laundry -> class clothes mass
coat -> class clothes
jacket -> class clothes
jumper -> class clothes
shirt -> class clothes
cushion -> class pillow
duvet -> class blanket
throw -> class blanket
houseplant -> class plant
teddy -> class toy
teddies -> class toy plural teddy
hand towel -> class towel
man -> class person
men -> class person plural man
woman -> class person
women -> class person plural woman
child -> class person
children -> class person plural child
kid -> class person
puppy -> class dog
# Household members named by their relation to the speaker.
husband -> class person
wife -> class person
wives -> class person plural wife
partner -> class person
grandad -> class person
grandpa -> class person
grandma -> class person
granny -> class person
grandmother -> class person
grandfather -> class person
daughter -> class person
son -> class person
brother -> class person
sister -> class person
lodger -> class person
flatmate -> class person
roommate -> class person
mum -> class person
mom -> class person
dad -> class person
baby -> class person
babies -> class person plural baby
toddler -> class person
someone -> class person
somebody -> class person
puppies -> class dog plural puppy
kitten -> class cat
kitty -> class cat
kitties -> class cat plural kitty

# Compound names whose first word alone is no class word (or another class): the whole phrase names one
# thing, so "floor lamp" is a lamp, not a floor and a lamp.
cardboard box -> class box
cardboard boxes -> class box plural cardboard box
tea towel -> class towel
bath towel -> class towel
water bottle -> class bottle
teddy bear -> class toy
coffee mug -> class mug
coffee cup -> class mug
floor lamp -> class lamp
table lamp -> class lamp
desk lamp -> class lamp
office chair -> class chair
dining chair -> class chair
kitchen counter -> class counter
back door -> class door
front door -> class door

# "The washing" is clothes; a washing machine or basket is not.
washing = laundry when after the|of|some|my|your|our|clean|dirty|wet|folded unless before machine|machines|basket|baskets|line|up

# More everyday names for the classes (common English usage, from memory).
fern -> class plant
greyhound -> class dog
bedside lamp -> class lamp
bedside light -> class lamp

# More household members and visitors, read as a person only where no identity construction can make them a
# relabel: never right after a verb, an article or "as" ("that's my aunt", "it's a guest" stay unread), and with
# a determiner only when that is not after a verb ("my aunt is on the sofa", "Auntie Rosalind is reading").
aunt = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the aunt = the person unless after is|are|was|were|be|as
my aunt = my person unless after is|are|was|were|be|as
our aunt = our person unless after is|are|was|were|be|as
your aunt = your person unless after is|are|was|were|be|as
his aunt = his person unless after is|are|was|were|be|as
her aunt = her person unless after is|are|was|were|be|as
their aunt = their person unless after is|are|was|were|be|as
auntie = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the auntie = the person unless after is|are|was|were|be|as
my auntie = my person unless after is|are|was|were|be|as
our auntie = our person unless after is|are|was|were|be|as
your auntie = your person unless after is|are|was|were|be|as
his auntie = his person unless after is|are|was|were|be|as
her auntie = her person unless after is|are|was|were|be|as
their auntie = their person unless after is|are|was|were|be|as
aunty = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the aunty = the person unless after is|are|was|were|be|as
my aunty = my person unless after is|are|was|were|be|as
our aunty = our person unless after is|are|was|were|be|as
your aunty = your person unless after is|are|was|were|be|as
his aunty = his person unless after is|are|was|were|be|as
her aunty = her person unless after is|are|was|were|be|as
their aunty = their person unless after is|are|was|were|be|as
uncle = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the uncle = the person unless after is|are|was|were|be|as
my uncle = my person unless after is|are|was|were|be|as
our uncle = our person unless after is|are|was|were|be|as
your uncle = your person unless after is|are|was|were|be|as
his uncle = his person unless after is|are|was|were|be|as
her uncle = her person unless after is|are|was|were|be|as
their uncle = their person unless after is|are|was|were|be|as
cousin = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the cousin = the person unless after is|are|was|were|be|as
my cousin = my person unless after is|are|was|were|be|as
our cousin = our person unless after is|are|was|were|be|as
your cousin = your person unless after is|are|was|were|be|as
his cousin = his person unless after is|are|was|were|be|as
her cousin = her person unless after is|are|was|were|be|as
their cousin = their person unless after is|are|was|were|be|as
niece = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the niece = the person unless after is|are|was|were|be|as
my niece = my person unless after is|are|was|were|be|as
our niece = our person unless after is|are|was|were|be|as
your niece = your person unless after is|are|was|were|be|as
his niece = his person unless after is|are|was|were|be|as
her niece = her person unless after is|are|was|were|be|as
their niece = their person unless after is|are|was|were|be|as
nephew = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nephew = the person unless after is|are|was|were|be|as
my nephew = my person unless after is|are|was|were|be|as
our nephew = our person unless after is|are|was|were|be|as
your nephew = your person unless after is|are|was|were|be|as
his nephew = his person unless after is|are|was|were|be|as
her nephew = her person unless after is|are|was|were|be|as
their nephew = their person unless after is|are|was|were|be|as
guest = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the guest = the person unless after is|are|was|were|be|as
my guest = my person unless after is|are|was|were|be|as
our guest = our person unless after is|are|was|were|be|as
your guest = your person unless after is|are|was|were|be|as
his guest = his person unless after is|are|was|were|be|as
her guest = her person unless after is|are|was|were|be|as
their guest = their person unless after is|are|was|were|be|as
visitor = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the visitor = the person unless after is|are|was|were|be|as
my visitor = my person unless after is|are|was|were|be|as
our visitor = our person unless after is|are|was|were|be|as
your visitor = your person unless after is|are|was|were|be|as
his visitor = his person unless after is|are|was|were|be|as
her visitor = her person unless after is|are|was|were|be|as
their visitor = their person unless after is|are|was|were|be|as
neighbour = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the neighbour = the person unless after is|are|was|were|be|as
my neighbour = my person unless after is|are|was|were|be|as
our neighbour = our person unless after is|are|was|were|be|as
your neighbour = your person unless after is|are|was|were|be|as
his neighbour = his person unless after is|are|was|were|be|as
her neighbour = her person unless after is|are|was|were|be|as
their neighbour = their person unless after is|are|was|were|be|as
neighbor = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the neighbor = the person unless after is|are|was|were|be|as
my neighbor = my person unless after is|are|was|were|be|as
our neighbor = our person unless after is|are|was|were|be|as
your neighbor = your person unless after is|are|was|were|be|as
his neighbor = his person unless after is|are|was|were|be|as
her neighbor = her person unless after is|are|was|were|be|as
their neighbor = their person unless after is|are|was|were|be|as
nan = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nan = the person unless after is|are|was|were|be|as
my nan = my person unless after is|are|was|were|be|as
our nan = our person unless after is|are|was|were|be|as
your nan = your person unless after is|are|was|were|be|as
his nan = his person unless after is|are|was|were|be|as
her nan = her person unless after is|are|was|were|be|as
their nan = their person unless after is|are|was|were|be|as
nana = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nana = the person unless after is|are|was|were|be|as
my nana = my person unless after is|are|was|were|be|as
our nana = our person unless after is|are|was|were|be|as
your nana = your person unless after is|are|was|were|be|as
his nana = his person unless after is|are|was|were|be|as
her nana = her person unless after is|are|was|were|be|as
their nana = their person unless after is|are|was|were|be|as
nanna = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nanna = the person unless after is|are|was|were|be|as
my nanna = my person unless after is|are|was|were|be|as
our nanna = our person unless after is|are|was|were|be|as
your nanna = your person unless after is|are|was|were|be|as
his nanna = his person unless after is|are|was|were|be|as
her nanna = her person unless after is|are|was|were|be|as
their nanna = their person unless after is|are|was|were|be|as
gran = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the gran = the person unless after is|are|was|were|be|as
my gran = my person unless after is|are|was|were|be|as
our gran = our person unless after is|are|was|were|be|as
your gran = your person unless after is|are|was|were|be|as
his gran = his person unless after is|are|was|were|be|as
her gran = her person unless after is|are|was|were|be|as
their gran = their person unless after is|are|was|were|be|as
nanny = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nanny = the person unless after is|are|was|were|be|as
my nanny = my person unless after is|are|was|were|be|as
our nanny = our person unless after is|are|was|were|be|as
your nanny = your person unless after is|are|was|were|be|as
his nanny = his person unless after is|are|was|were|be|as
her nanny = her person unless after is|are|was|were|be|as
their nanny = their person unless after is|are|was|were|be|as
babysitter = person unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the babysitter = the person unless after is|are|was|were|be|as
my babysitter = my person unless after is|are|was|were|be|as
our babysitter = our person unless after is|are|was|were|be|as
your babysitter = your person unless after is|are|was|were|be|as
his babysitter = his person unless after is|are|was|were|be|as
her babysitter = her person unless after is|are|was|were|be|as
their babysitter = their person unless after is|are|was|were|be|as
aunts = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the aunts = the people unless after is|are|was|were|be|as
my aunts = my people unless after is|are|was|were|be|as
our aunts = our people unless after is|are|was|were|be|as
your aunts = your people unless after is|are|was|were|be|as
his aunts = his people unless after is|are|was|were|be|as
her aunts = her people unless after is|are|was|were|be|as
their aunts = their people unless after is|are|was|were|be|as
aunties = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the aunties = the people unless after is|are|was|were|be|as
my aunties = my people unless after is|are|was|were|be|as
our aunties = our people unless after is|are|was|were|be|as
your aunties = your people unless after is|are|was|were|be|as
his aunties = his people unless after is|are|was|were|be|as
her aunties = her people unless after is|are|was|were|be|as
their aunties = their people unless after is|are|was|were|be|as
uncles = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the uncles = the people unless after is|are|was|were|be|as
my uncles = my people unless after is|are|was|were|be|as
our uncles = our people unless after is|are|was|were|be|as
your uncles = your people unless after is|are|was|were|be|as
his uncles = his people unless after is|are|was|were|be|as
her uncles = her people unless after is|are|was|were|be|as
their uncles = their people unless after is|are|was|were|be|as
cousins = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the cousins = the people unless after is|are|was|were|be|as
my cousins = my people unless after is|are|was|were|be|as
our cousins = our people unless after is|are|was|were|be|as
your cousins = your people unless after is|are|was|were|be|as
his cousins = his people unless after is|are|was|were|be|as
her cousins = her people unless after is|are|was|were|be|as
their cousins = their people unless after is|are|was|were|be|as
nieces = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nieces = the people unless after is|are|was|were|be|as
my nieces = my people unless after is|are|was|were|be|as
our nieces = our people unless after is|are|was|were|be|as
your nieces = your people unless after is|are|was|were|be|as
his nieces = his people unless after is|are|was|were|be|as
her nieces = her people unless after is|are|was|were|be|as
their nieces = their people unless after is|are|was|were|be|as
nephews = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nephews = the people unless after is|are|was|were|be|as
my nephews = my people unless after is|are|was|were|be|as
our nephews = our people unless after is|are|was|were|be|as
your nephews = your people unless after is|are|was|were|be|as
his nephews = his people unless after is|are|was|were|be|as
her nephews = her people unless after is|are|was|were|be|as
their nephews = their people unless after is|are|was|were|be|as
guests = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the guests = the people unless after is|are|was|were|be|as
my guests = my people unless after is|are|was|were|be|as
our guests = our people unless after is|are|was|were|be|as
your guests = your people unless after is|are|was|were|be|as
his guests = his people unless after is|are|was|were|be|as
her guests = her people unless after is|are|was|were|be|as
their guests = their people unless after is|are|was|were|be|as
visitors = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the visitors = the people unless after is|are|was|were|be|as
my visitors = my people unless after is|are|was|were|be|as
our visitors = our people unless after is|are|was|were|be|as
your visitors = your people unless after is|are|was|were|be|as
his visitors = his people unless after is|are|was|were|be|as
her visitors = her people unless after is|are|was|were|be|as
their visitors = their people unless after is|are|was|were|be|as
neighbours = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the neighbours = the people unless after is|are|was|were|be|as
my neighbours = my people unless after is|are|was|were|be|as
our neighbours = our people unless after is|are|was|were|be|as
your neighbours = your people unless after is|are|was|were|be|as
his neighbours = his people unless after is|are|was|were|be|as
her neighbours = her people unless after is|are|was|were|be|as
their neighbours = their people unless after is|are|was|were|be|as
neighbors = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the neighbors = the people unless after is|are|was|were|be|as
my neighbors = my people unless after is|are|was|were|be|as
our neighbors = our people unless after is|are|was|were|be|as
your neighbors = your people unless after is|are|was|were|be|as
his neighbors = his people unless after is|are|was|were|be|as
her neighbors = her people unless after is|are|was|were|be|as
their neighbors = their people unless after is|are|was|were|be|as
nannies = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the nannies = the people unless after is|are|was|were|be|as
my nannies = my people unless after is|are|was|were|be|as
our nannies = our people unless after is|are|was|were|be|as
your nannies = your people unless after is|are|was|were|be|as
his nannies = his people unless after is|are|was|were|be|as
her nannies = her people unless after is|are|was|were|be|as
their nannies = their people unless after is|are|was|were|be|as
babysitters = people unless after is|are|was|were|be|a|an|as|the|my|our|your|his|her|their|this|that|these|those|its|it
the babysitters = the people unless after is|are|was|were|be|as
my babysitters = my people unless after is|are|was|were|be|as
our babysitters = our people unless after is|are|was|were|be|as
your babysitters = your people unless after is|are|was|were|be|as
his babysitters = his people unless after is|are|was|were|be|as
her babysitters = her people unless after is|are|was|were|be|as
their babysitters = their people unless after is|are|was|were|be|as
