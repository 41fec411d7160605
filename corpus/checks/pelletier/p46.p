% problem: Pelletier 46
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [X] : ((f(X) & (! [Y] : ((f(Y) & h(Y, X)) => g(Y)))) => g(X))).

fof(h2, axiom,
    (? [X] : (f(X) & ~g(X))) => (? [X] : (f(X) & ~g(X) & (! [Y] : ((f(Y) & ~g(Y)) => j(X, Y)))))).

fof(h3, axiom,
    ! [X, Y] : ((f(X) & f(Y) & h(X, Y)) => ~j(Y, X))).

fof(pel46_goal, conjecture,
    ! [X] : (f(X) => g(X))).
