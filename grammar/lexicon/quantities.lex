# Quantity phrases and comparators.
#   phrase -> quantity exactly N | at_least N | some | none
#   phrase -> comparator exactly | at_least | at_most | more_than | fewer_than
#   phrase -> article            ("a", "an": one thing, no count stated)
a -> article
an -> article
a couple of -> quantity exactly 2
a couple -> quantity exactly 2
a pair of -> quantity exactly 2
a dozen -> quantity exactly 12
half a dozen -> quantity exactly 6
dozen -> quantity exactly 12
both -> quantity exactly 2
a single -> quantity exactly 1
single -> quantity exactly 1
not a single -> quantity none
not any -> quantity none
the same -> quantity exactly 1
several -> quantity at_least 3
a few -> quantity at_least 2
a lot of -> quantity at_least 3
lots of -> quantity at_least 3
many -> quantity at_least 3
some -> quantity some
any -> quantity some
no -> no
none of the -> quantity none
none -> quantity none
at least -> comparator at_least
no fewer than -> comparator at_least
no less than -> comparator at_least
at most -> comparator at_most
no more than -> comparator at_most
up to -> comparator at_most
more than -> comparator more_than
over -> relation above
fewer than -> comparator fewer_than
less than -> comparator fewer_than
exactly -> comparator exactly
only -> comparator exactly
just -> comparator exactly
precisely -> comparator exactly
# "There are over five books", "under three cups": before a number after "are" (or opening a note) these
# compare; elsewhere they are places ("the cat is under 2 blankets").
over = more than when after <start>|are|were|have|has|see|count when before <number>
under = fewer than when after <start>|are|were|have|has|see|count when before <number>
not more than = at most
not fewer than = at least
not less than = at least
# "There's another mug", "one more mug": one more of it is there.
another = a when before <class>
one more = a when before <class>
# "Not one dog in here": none.
not one = no when after <start> when before <class>
