% The swimming hall: does locker 7 have a key?
include('Axioms/lockers.ax').
include('sub/extra.ax', [anna]).
fof(goal, conjecture, ? [K] : opens(K, l7), file('hall.p', goal)).
