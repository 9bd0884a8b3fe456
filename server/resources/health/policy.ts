// Health is public: a load balancer asks it without credentials.

/** Anyone may ask whether the server is up and reaches its database. */
export const canAskHealth = (): boolean => true;
