% problem: Pelletier 45
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [X] : ((f(X) & (! [Y] : ((g(Y) & h(X, Y)) => j(X, Y)))) => (! [Y] : ((g(Y) & h(X, Y)) => k(Y))))).

fof(h2, axiom,
    ~ (? [Y] : (l(Y) & k(Y)))).

fof(h3, axiom,
    ? [X] : (f(X) & (! [Y] : (h(X, Y) => l(Y))) & (! [Y] : ((g(Y) & h(X, Y)) => j(X, Y))))).

fof(pel45_goal, conjecture,
    ? [X] : (f(X) & ~ (? [Y] : (g(Y) & h(X, Y))))).
