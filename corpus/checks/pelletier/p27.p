% problem: Pelletier 27
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    ? [X] : (f(X) & ~g(X))).

fof(h2, axiom,
    ! [X] : (f(X) => h(X))).

fof(h3, axiom,
    ! [X] : ((j(X) & i(X)) => f(X))).

fof(h4, axiom,
    (? [X] : (h(X) & ~g(X))) => (! [X] : (i(X) => ~h(X)))).

fof(pel27_goal, conjecture,
    ! [X] : (j(X) => ~i(X))).
