% problem: Pelletier 44
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [X] : (f(X) => ((? [Y] : (g(Y) & h(X, Y))) & (? [Y] : (g(Y) & ~h(X, Y)))))).

fof(h2, axiom,
    ? [X] : (j(X) & (! [Y] : (g(Y) => h(X, Y))))).

fof(pel44_goal, conjecture,
    ? [X] : (j(X) & ~f(X))).
