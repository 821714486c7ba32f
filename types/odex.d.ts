declare module "odex";
