% problem: Pelletier 47, Schubert's steamroller
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order
% note: the conjecture: some animal eats a grain-eating animal

fof(wolf_is_animal, axiom,
    ! [X] : (wolf(X) => animal(X))).

fof(some_wolf, axiom,
    ? [X] : wolf(X)).

fof(fox_is_animal, axiom,
    ! [X] : (fox(X) => animal(X))).

fof(some_fox, axiom,
    ? [X] : fox(X)).

fof(bird_is_animal, axiom,
    ! [X] : (bird(X) => animal(X))).

fof(some_bird, axiom,
    ? [X] : bird(X)).

fof(caterpillar_is_animal, axiom,
    ! [X] : (caterpillar(X) => animal(X))).

fof(some_caterpillar, axiom,
    ? [X] : caterpillar(X)).

fof(snail_is_animal, axiom,
    ! [X] : (snail(X) => animal(X))).

fof(some_snail, axiom,
    ? [X] : snail(X)).

fof(grain_is_plant, axiom,
    ! [X] : (grain(X) => plant(X))).

fof(some_grain, axiom,
    ? [X] : grain(X)).

fof(diet, axiom,
    ! [X] : (animal(X) => ((! [Y] : (plant(Y) => eats(X, Y))) | (! [Y] : ((animal(Y) & much_smaller(Y, X) & (? [Z] : (plant(Z) & eats(Y, Z)))) => eats(X, Y)))))).

fof(caterpillar_smaller_than_bird, axiom,
    ! [X, Y] : ((caterpillar(X) & bird(Y)) => much_smaller(X, Y))).

fof(snail_smaller_than_bird, axiom,
    ! [X, Y] : ((snail(X) & bird(Y)) => much_smaller(X, Y))).

fof(bird_smaller_than_fox, axiom,
    ! [X, Y] : ((bird(X) & fox(Y)) => much_smaller(X, Y))).

fof(fox_smaller_than_wolf, axiom,
    ! [X, Y] : ((fox(X) & wolf(Y)) => much_smaller(X, Y))).

fof(wolf_shuns_fox, axiom,
    ! [X, Y] : ((wolf(X) & fox(Y)) => ~eats(X, Y))).

fof(wolf_shuns_grain, axiom,
    ! [X, Y] : ((wolf(X) & grain(Y)) => ~eats(X, Y))).

fof(bird_eats_caterpillar, axiom,
    ! [X, Y] : ((bird(X) & caterpillar(Y)) => eats(X, Y))).

fof(bird_shuns_snail, axiom,
    ! [X, Y] : ((bird(X) & snail(Y)) => ~eats(X, Y))).

fof(caterpillar_food, axiom,
    ! [X] : (caterpillar(X) => (? [Y] : (plant(Y) & eats(X, Y))))).

fof(snail_food, axiom,
    ! [X] : (snail(X) => (? [Y] : (plant(Y) & eats(X, Y))))).

fof(pel47_goal, conjecture,
    ? [X, Y] : (animal(X) & animal(Y) & (? [Z] : (grain(Z) & eats(Y, Z) & eats(X, Y))))).
