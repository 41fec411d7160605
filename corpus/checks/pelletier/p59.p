% problem: Pelletier 59
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    ! [X] : (p(X) <=> ~p(f(X)))).

fof(pel59_goal, conjecture,
    ? [X] : (p(X) & ~p(f(X)))).
