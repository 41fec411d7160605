% problem: Pelletier 66, implication and negation by detachment
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order
% note: uncertain rendering: the three axiom schemes of a complete axiomatization of
%   classical implication and negation with detachment, as remembered; the
%   conjecture is a tautology, so it is derivable and the status is Theorem
%   whatever the exact published wording.

fof(axiom_k, axiom,
    ! [X, Y] : t(i(X, i(Y, X)))).

fof(axiom_s, axiom,
    ! [X, Y, Z] : t(i(i(X, i(Y, Z)), i(i(X, Y), i(X, Z))))).

fof(axiom_contra, axiom,
    ! [X, Y] : t(i(i(n(X), n(Y)), i(Y, X)))).

fof(detachment, axiom,
    ! [X, Y] : ((t(i(X, Y)) & t(X)) => t(Y))).

fof(pel66_goal, conjecture,
    ! [X] : t(i(X, n(n(X))))).
