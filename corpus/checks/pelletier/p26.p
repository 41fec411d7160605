% problem: Pelletier 26
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    (? [X] : p(X)) <=> (? [X] : q(X))).

fof(h2, axiom,
    ! [X, Y] : ((p(X) & q(Y)) => (r(X) <=> s(Y)))).

fof(pel26_goal, conjecture,
    (! [X] : (p(X) => r(X))) <=> (! [X] : (q(X) => s(X)))).
