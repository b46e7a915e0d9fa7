// What npm start prints about the demo: keep in step with server/database/demo.ts.
export const DEMO = `demo accounts (password: kelderwick-demo)
    facilitator@demo.counterpoise.example   facilitator of the Kelderwick room
    harbour@ / wildlife@ / residents@demo.counterpoise.example   stakeholders
    observer@demo.counterpoise.example      observer (gallery)
    secretary@demo.counterpoise.example     secretary (minutes)
    admin@demo.counterpoise.example         site administrator`
